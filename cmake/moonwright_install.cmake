# Install rules: the engine library, its headers and a CMake package config so that
# another program can `find_package(moonwright)` and link `moonwright::engine`.
include(CMakePackageConfigHelpers)

install(TARGETS moonwright_engine
        EXPORT moonwright_targets
        ARCHIVE DESTINATION ${CMAKE_INSTALL_LIBDIR}
        LIBRARY DESTINATION ${CMAKE_INSTALL_LIBDIR}
        INCLUDES DESTINATION ${CMAKE_INSTALL_INCLUDEDIR}/moonwright)
install(TARGETS moonwright RUNTIME DESTINATION ${CMAKE_INSTALL_BINDIR})
install(DIRECTORY ${PROJECT_SOURCE_DIR}/engine DESTINATION ${CMAKE_INSTALL_INCLUDEDIR}/moonwright
        FILES_MATCHING PATTERN "*.hpp")
install(DIRECTORY ${PROJECT_SOURCE_DIR}/integrators
        DESTINATION ${CMAKE_INSTALL_INCLUDEDIR}/moonwright FILES_MATCHING PATTERN "*.hpp")
install(EXPORT moonwright_targets NAMESPACE moonwright:: FILE moonwright-targets.cmake
        DESTINATION ${CMAKE_INSTALL_LIBDIR}/cmake/moonwright)
configure_package_config_file(${PROJECT_SOURCE_DIR}/cmake/moonwright-config.cmake.in
                              ${PROJECT_BINARY_DIR}/moonwright-config.cmake
                              INSTALL_DESTINATION ${CMAKE_INSTALL_LIBDIR}/cmake/moonwright)
write_basic_package_version_file(${PROJECT_BINARY_DIR}/moonwright-config-version.cmake
                                 COMPATIBILITY SameMinorVersion)
install(FILES ${PROJECT_BINARY_DIR}/moonwright-config.cmake
              ${PROJECT_BINARY_DIR}/moonwright-config-version.cmake
        DESTINATION ${CMAKE_INSTALL_LIBDIR}/cmake/moonwright)
