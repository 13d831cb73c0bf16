# Included by the package tests: installs the fxmimo build tree BINARY_DIR into WORK_DIR/prefix
# (WORK_DIR emptied first), then configures and builds the project in `project_dir` against it
# into WORK_DIR/build. `what` names the project in failure messages.
function(fxmimo_build_against_install project_dir what)
  file(REMOVE_RECURSE ${WORK_DIR})
  execute_process(COMMAND ${CMAKE_COMMAND} --install ${BINARY_DIR} --prefix ${WORK_DIR}/prefix
                  RESULT_VARIABLE rc OUTPUT_QUIET)
  if(rc)
    message(FATAL_ERROR "install failed: ${rc}")
  endif()
  execute_process(COMMAND ${CMAKE_COMMAND} -S ${project_dir} -B ${WORK_DIR}/build -G Ninja
                  -DCMAKE_PREFIX_PATH=${WORK_DIR}/prefix RESULT_VARIABLE rc)
  if(rc)
    message(FATAL_ERROR "configuring ${what} failed: ${rc}")
  endif()
  execute_process(COMMAND ${CMAKE_COMMAND} --build ${WORK_DIR}/build RESULT_VARIABLE rc)
  if(rc)
    message(FATAL_ERROR "building ${what} failed: ${rc}")
  endif()
endfunction()
