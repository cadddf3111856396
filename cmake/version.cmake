# Writes the version source with the current git commit; run at every build so the commit recorded
# in outputs is the one the binary was built from. Inputs: SRC_DIR, IN, OUT, VERSION, COMPILER.
execute_process(COMMAND git rev-parse --short=12 HEAD WORKING_DIRECTORY ${SRC_DIR}
                OUTPUT_VARIABLE SWAYBOUND_GIT_COMMIT OUTPUT_STRIP_TRAILING_WHITESPACE ERROR_QUIET)
if(NOT SWAYBOUND_GIT_COMMIT)
  set(SWAYBOUND_GIT_COMMIT "unknown")
endif()
execute_process(COMMAND git status --porcelain --untracked-files=no WORKING_DIRECTORY ${SRC_DIR}
                OUTPUT_VARIABLE DIRTY OUTPUT_STRIP_TRAILING_WHITESPACE ERROR_QUIET)
if(DIRTY)
  set(SWAYBOUND_GIT_COMMIT "${SWAYBOUND_GIT_COMMIT}+modified")
endif()
set(PROJECT_VERSION ${VERSION})
set(CMAKE_CXX_COMPILER_ID ${COMPILER})
set(CMAKE_CXX_COMPILER_VERSION "")
configure_file(${IN} ${OUT}.tmp @ONLY)
execute_process(COMMAND ${CMAKE_COMMAND} -E copy_if_different ${OUT}.tmp ${OUT})
