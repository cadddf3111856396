# ctest script: installs the build tree into WORK/prefix, builds tests/package against it with
# find_package(swaybound COMPONENTS engine), runs the program, and fails when its link line names a
# library that only sizing or the report need (NLopt, cairo, Pango, OpenSSL).
# -DBUILD_DIR= the swaybound build tree, -DSOURCE_DIR= this folder, -DWORK= a scratch folder,
# -DCXX= the compiler of the build tree.
file(REMOVE_RECURSE ${WORK})
function(run)
  execute_process(COMMAND ${ARGN} RESULT_VARIABLE status OUTPUT_VARIABLE out ERROR_VARIABLE err)
  if(NOT status EQUAL 0)
    message(FATAL_ERROR "failed (${status}): ${ARGN}\n${out}\n${err}")
  endif()
  set(last_output "${out}" PARENT_SCOPE)
endfunction()
run(${CMAKE_COMMAND} --install ${BUILD_DIR} --prefix ${WORK}/prefix)
run(${CMAKE_COMMAND} -S ${SOURCE_DIR} -B ${WORK}/build -DCMAKE_PREFIX_PATH=${WORK}/prefix -DCMAKE_BUILD_TYPE=Release -DCMAKE_CXX_COMPILER=${CXX})
run(${CMAKE_COMMAND} --build ${WORK}/build)
run(${WORK}/build/engine_consumer)
message(STATUS "${last_output}")
file(GLOB_RECURSE link_files ${WORK}/build/CMakeFiles/engine_consumer.dir/link.txt)
if(NOT link_files)
  message(FATAL_ERROR "no link.txt under ${WORK}/build: cannot see the consumer's link line")
endif()
file(READ ${link_files} link_line)
foreach(unwanted nlopt cairo pango ssl crypto swaybound_report swaybound_sizing)
  string(FIND "${link_line}" "${unwanted}" at)
  if(NOT at EQUAL -1)
    message(FATAL_ERROR "an engine-only program links '${unwanted}':\n${link_line}")
  endif()
endforeach()
