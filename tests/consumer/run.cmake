# Installs keel from BUILD_DIR into a temporary prefix and builds the consumer against it with find_package;
# then builds the consumer again with add_subdirectory(SOURCE_DIR). Both consumers must run and exit 0.
set(work ${WORK_DIR})
file(REMOVE_RECURSE ${work})
function(run)
  execute_process(COMMAND ${ARGN} RESULT_VARIABLE rc OUTPUT_VARIABLE out ERROR_VARIABLE err)
  if(NOT rc EQUAL 0)
    message(FATAL_ERROR "failed: ${ARGN}\n${out}\n${err}")
  endif()
  message("${out}")
endfunction()
run(${CMAKE_COMMAND} --install ${BUILD_DIR} --prefix ${work}/prefix)
run(${CMAKE_COMMAND} -S ${SOURCE_DIR}/tests/consumer -B ${work}/installed -G ${GENERATOR}
    -DCMAKE_CXX_COMPILER=${CXX} -DCMAKE_PREFIX_PATH=${work}/prefix)
run(${CMAKE_COMMAND} --build ${work}/installed)
run(${work}/installed/consumer)
run(${CMAKE_COMMAND} -S ${SOURCE_DIR}/tests/consumer -B ${work}/subdir -G ${GENERATOR}
    -DCMAKE_CXX_COMPILER=${CXX} -DKEEL_SOURCE_DIR=${SOURCE_DIR})
run(${CMAKE_COMMAND} --build ${work}/subdir)
run(${work}/subdir/consumer)
