# FLINT 2.9 (Debian 12) ships no CMake or pkg-config file: find header and library.
find_path(FLINT_INCLUDE_DIR flint/flint.h)
find_library(FLINT_LIBRARY NAMES flint)
include(FindPackageHandleStandardArgs)
find_package_handle_standard_args(FLINT DEFAULT_MSG FLINT_LIBRARY FLINT_INCLUDE_DIR)
if(FLINT_FOUND AND NOT TARGET FLINT::FLINT)
  add_library(FLINT::FLINT UNKNOWN IMPORTED)
  set_target_properties(FLINT::FLINT PROPERTIES IMPORTED_LOCATION "${FLINT_LIBRARY}"
    INTERFACE_INCLUDE_DIRECTORIES "${FLINT_INCLUDE_DIR}")
endif()
