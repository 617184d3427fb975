# Installs triaxcal into a scratch prefix, builds tests/consumer/project against it with
# find_package(triaxcal) and runs it.
add_test(NAME "install: a consumer project finds triaxcal with find_package and runs a simulation"
  COMMAND ${CMAKE_COMMAND}
    -DBUILD_DIR=${PROJECT_BINARY_DIR}
    -DSOURCE_DIR=${CMAKE_CURRENT_SOURCE_DIR}/consumer/project
    -DWORK_DIR=${CMAKE_CURRENT_BINARY_DIR}/consumer
    -DGENERATOR=${CMAKE_GENERATOR}
    -P ${CMAKE_CURRENT_SOURCE_DIR}/consumer/run_consumer.cmake)
