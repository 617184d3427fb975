# Install the libraries, public headers, the triaxcal command and a CMake package:
#   find_package(triaxcal CONFIG REQUIRED)  ->  triaxcal::core, triaxcal::models
include(GNUInstallDirs)
include(CMakePackageConfigHelpers)

install(TARGETS triaxcal_core triaxcal_models EXPORT triaxcalTargets
  ARCHIVE DESTINATION ${CMAKE_INSTALL_LIBDIR}
  LIBRARY DESTINATION ${CMAKE_INSTALL_LIBDIR}
  RUNTIME DESTINATION ${CMAKE_INSTALL_BINDIR})
install(TARGETS triaxcal RUNTIME DESTINATION ${CMAKE_INSTALL_BINDIR})
install(DIRECTORY ${PROJECT_SOURCE_DIR}/core/include/ ${PROJECT_SOURCE_DIR}/models/include/
        ${PROJECT_BINARY_DIR}/core/include/ ${PROJECT_BINARY_DIR}/models/include/
        DESTINATION ${CMAKE_INSTALL_INCLUDEDIR} FILES_MATCHING PATTERN "*.hpp")
install(EXPORT triaxcalTargets NAMESPACE triaxcal:: DESTINATION ${CMAKE_INSTALL_LIBDIR}/cmake/triaxcal)

configure_package_config_file(${PROJECT_SOURCE_DIR}/cmake/triaxcalConfig.cmake.in
  ${PROJECT_BINARY_DIR}/triaxcalConfig.cmake INSTALL_DESTINATION ${CMAKE_INSTALL_LIBDIR}/cmake/triaxcal)
write_basic_package_version_file(${PROJECT_BINARY_DIR}/triaxcalConfigVersion.cmake COMPATIBILITY SameMinorVersion)
install(FILES ${PROJECT_BINARY_DIR}/triaxcalConfig.cmake ${PROJECT_BINARY_DIR}/triaxcalConfigVersion.cmake
  DESTINATION ${CMAKE_INSTALL_LIBDIR}/cmake/triaxcal)
