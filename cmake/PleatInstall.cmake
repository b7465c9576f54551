# `make install` / `cmake --install build [--prefix DIR]`: the C++ library,
# its headers, the pleat binary, a CMake package and a pkg-config file, and
# (with PLEAT_PYTHON) the Python package.
#
#   include/pleat/{core,lp,enumerate}/*.hpp   the public headers
#   lib/libpleat.so.<version>                 core + lp + enumerate in one shared library
#   lib/cmake/pleat/                          find_package(pleat) -> pleat::pleat
#   lib/pkgconfig/pleat.pc                    pkg-config --cflags --libs pleat
#   bin/pleat                                 the command line
#   lib/python3.X/dist-packages/pleat/        import pleat (Debian's python3 reads it under /usr/local)
#
# One shared library rather than three archives: its private dependencies
# (GLPK, cddlib, FLINT, MPFR, ONNX, protobuf) are resolved when it is linked,
# so a program that uses it needs only GMP's headers and libraries, which the
# public headers name (core/rational.hpp includes gmpxx.h).
include(GNUInstallDirs)
include(CMakePackageConfigHelpers)

add_library(pleat_library SHARED ${PROJECT_SOURCE_DIR}/cmake/pleat_version.cpp)
# Every object of the three archives goes in (--whole-archive before the
# objects; CMake's WHOLE_ARCHIVE feature refuses archives that also come in
# transitively); linking pleat_enumerate as usual then brings the archives'
# own dependencies after them.
target_link_options(pleat_library PRIVATE
  "SHELL:-Wl,--whole-archive $<TARGET_FILE:pleat_enumerate> $<TARGET_FILE:pleat_lp> $<TARGET_FILE:pleat_core> -Wl,--no-whole-archive")
target_link_libraries(pleat_library PRIVATE pleat_enumerate)
target_compile_definitions(pleat_library PRIVATE PLEAT_VERSION="${PROJECT_VERSION}")
set_target_properties(pleat_library PROPERTIES
  OUTPUT_NAME pleat EXPORT_NAME pleat
  VERSION ${PROJECT_VERSION} SOVERSION ${PROJECT_VERSION_MAJOR}.${PROJECT_VERSION_MINOR})
target_include_directories(pleat_library INTERFACE
  $<INSTALL_INTERFACE:${CMAKE_INSTALL_INCLUDEDIR}> $<INSTALL_INTERFACE:${CMAKE_INSTALL_INCLUDEDIR}/pleat>)
# Headers include one another as "core/rational.hpp", hence include/pleat on
# the path too; programs write #include <pleat/enumerate/walker.hpp>.
target_link_libraries(pleat_library INTERFACE $<INSTALL_INTERFACE:gmpxx> $<INSTALL_INTERFACE:gmp>)
target_compile_features(pleat_library INTERFACE cxx_std_20)

foreach(folder core lp enumerate)
  install(DIRECTORY ${PROJECT_SOURCE_DIR}/${folder}/ DESTINATION ${CMAKE_INSTALL_INCLUDEDIR}/pleat/${folder}
          FILES_MATCHING PATTERN "*.hpp" PATTERN "detail" EXCLUDE)
endforeach()
install(TARGETS pleat_library EXPORT pleatTargets
        LIBRARY DESTINATION ${CMAKE_INSTALL_LIBDIR}
        INCLUDES DESTINATION ${CMAKE_INSTALL_INCLUDEDIR})
install(TARGETS pleat RUNTIME DESTINATION ${CMAKE_INSTALL_BINDIR})

set(PLEAT_CMAKE_DIR ${CMAKE_INSTALL_LIBDIR}/cmake/pleat)
install(EXPORT pleatTargets NAMESPACE pleat:: DESTINATION ${PLEAT_CMAKE_DIR})
configure_package_config_file(${PROJECT_SOURCE_DIR}/cmake/pleatConfig.cmake.in
  ${CMAKE_CURRENT_BINARY_DIR}/pleatConfig.cmake INSTALL_DESTINATION ${PLEAT_CMAKE_DIR})
write_basic_package_version_file(${CMAKE_CURRENT_BINARY_DIR}/pleatConfigVersion.cmake
  VERSION ${PROJECT_VERSION} COMPATIBILITY SameMinorVersion)
install(FILES ${CMAKE_CURRENT_BINARY_DIR}/pleatConfig.cmake ${CMAKE_CURRENT_BINARY_DIR}/pleatConfigVersion.cmake
        DESTINATION ${PLEAT_CMAKE_DIR})

# pkg-config: paths relative to where the file lies (${pcfiledir}), so the
# installed tree can be moved or installed under any prefix.
file(RELATIVE_PATH PLEAT_PC_TO_PREFIX /prefix/${CMAKE_INSTALL_LIBDIR}/pkgconfig /prefix)
configure_file(${PROJECT_SOURCE_DIR}/cmake/pleat.pc.in ${CMAKE_CURRENT_BINARY_DIR}/pleat.pc @ONLY)
install(FILES ${CMAKE_CURRENT_BINARY_DIR}/pleat.pc DESTINATION ${CMAKE_INSTALL_LIBDIR}/pkgconfig)

if(PLEAT_PYTHON)
  # Where this python3 looks for packages under /usr/local (Debian:
  # /usr/local/lib/python3.X/dist-packages), relative to the prefix; else its
  # own site-packages relative to its prefix.
  execute_process(COMMAND ${Python3_EXECUTABLE} -c [=[
import os, sys, sysconfig
local = [p for p in sys.path if p.startswith("/usr/local/lib/python") and p.endswith("-packages")]
print(os.path.relpath(local[0], "/usr/local") if local else
      os.path.relpath(sysconfig.get_path("platlib"), sysconfig.get_config_var("base")))
]=] OUTPUT_VARIABLE PLEAT_PYTHON_DETECTED_DIR OUTPUT_STRIP_TRAILING_WHITESPACE)
  set(PLEAT_PYTHON_INSTALL_DIR "${PLEAT_PYTHON_DETECTED_DIR}"
      CACHE STRING "Where `make install` puts the pleat Python package (relative to the prefix, or absolute)")
  install(TARGETS pleat_python LIBRARY DESTINATION ${PLEAT_PYTHON_INSTALL_DIR}/pleat)
  install(FILES ${PROJECT_SOURCE_DIR}/python/pleat/__init__.py ${PROJECT_SOURCE_DIR}/python/pleat/_exact.py
                ${PROJECT_SOURCE_DIR}/python/pleat/_network.py ${PROJECT_SOURCE_DIR}/python/pleat/_results.py
                ${PROJECT_SOURCE_DIR}/python/pleat/_survey.py ${PROJECT_SOURCE_DIR}/python/pleat/_core.pyi
                ${PROJECT_SOURCE_DIR}/python/pleat/py.typed
          DESTINATION ${PLEAT_PYTHON_INSTALL_DIR}/pleat)
endif()
