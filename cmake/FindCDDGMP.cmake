# cddlib's exact (GMP rational) build: libcddgmp, used with GMPRATIONAL defined.
find_path(CDDGMP_INCLUDE_DIR cdd.h PATH_SUFFIXES cddlib cdd)
find_library(CDDGMP_LIBRARY NAMES cddgmp)
include(FindPackageHandleStandardArgs)
find_package_handle_standard_args(CDDGMP DEFAULT_MSG CDDGMP_LIBRARY CDDGMP_INCLUDE_DIR)
if(CDDGMP_FOUND AND NOT TARGET CDD::GMP)
  add_library(CDD::GMP UNKNOWN IMPORTED)
  set_target_properties(CDD::GMP PROPERTIES IMPORTED_LOCATION "${CDDGMP_LIBRARY}"
    INTERFACE_INCLUDE_DIRECTORIES "${CDDGMP_INCLUDE_DIR}"
    INTERFACE_COMPILE_DEFINITIONS "GMPRATIONAL")
endif()
