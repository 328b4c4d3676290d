# Finds fast-cpp-csv-parser (Debian libfccp-dev: the single header libfccp/csv.h).
# Defines the imported target fccp::fccp.
find_path(FCCP_INCLUDE_DIR libfccp/csv.h)
include(FindPackageHandleStandardArgs)
find_package_handle_standard_args(FCCP REQUIRED_VARS FCCP_INCLUDE_DIR)
if(FCCP_FOUND AND NOT TARGET fccp::fccp)
  add_library(fccp::fccp INTERFACE IMPORTED)
  set_target_properties(fccp::fccp PROPERTIES INTERFACE_INCLUDE_DIRECTORIES "${FCCP_INCLUDE_DIR}")
  find_package(Threads REQUIRED)
  set_property(TARGET fccp::fccp APPEND PROPERTY INTERFACE_LINK_LIBRARIES Threads::Threads)
endif()
mark_as_advanced(FCCP_INCLUDE_DIR)
