# Finds RE2 (Debian libre2-dev ships a pkg-config file but no CMake package).
# Defines the imported target re2::re2.
find_package(PkgConfig QUIET)
if(PkgConfig_FOUND)
  pkg_check_modules(PC_RE2 QUIET re2)
endif()
find_path(RE2_INCLUDE_DIR re2/re2.h HINTS ${PC_RE2_INCLUDE_DIRS})
find_library(RE2_LIBRARY re2 HINTS ${PC_RE2_LIBRARY_DIRS})
include(FindPackageHandleStandardArgs)
find_package_handle_standard_args(RE2 REQUIRED_VARS RE2_LIBRARY RE2_INCLUDE_DIR)
if(RE2_FOUND AND NOT TARGET re2::re2)
  add_library(re2::re2 UNKNOWN IMPORTED)
  set_target_properties(re2::re2 PROPERTIES
    IMPORTED_LOCATION "${RE2_LIBRARY}"
    INTERFACE_INCLUDE_DIRECTORIES "${RE2_INCLUDE_DIR}"
    INTERFACE_COMPILE_OPTIONS "${PC_RE2_CFLAGS_OTHER}")
  find_package(Threads REQUIRED)
  set_property(TARGET re2::re2 APPEND PROPERTY INTERFACE_LINK_LIBRARIES Threads::Threads)
endif()
mark_as_advanced(RE2_INCLUDE_DIR RE2_LIBRARY)
