# cmake -DHOLDCOUNT=BINARY -DOUTPUT_DIR=DIR -P generate-docs.cmake
#
# Writes DIR/docs/man/holdcount.1, DIR/docs/man/holdcount-COMMAND.1 and
# DIR/share/bash-completion/completions/holdcount from the binary's option
# tables, through `holdcount help --man [COMMAND]` and
# `holdcount help --bash-completion` (src/cli/cli.c).  With DIR the source
# tree it refreshes the checked-in copies (target update-generated-docs);
# tests/cli_man.sh and tests/cli_completion.sh run it into a scratch DIR and
# fail when the checked-in files differ.
foreach(var HOLDCOUNT OUTPUT_DIR)
  if(NOT DEFINED ${var})
    message(FATAL_ERROR "generate-docs.cmake: -D${var}=... is required")
  endif()
endforeach()

function(holdcount_help out)
  execute_process(COMMAND ${HOLDCOUNT} help ${ARGN} OUTPUT_VARIABLE text RESULT_VARIABLE rc)
  if(NOT rc EQUAL 0)
    message(FATAL_ERROR "holdcount help ${ARGN}: exit status ${rc}")
  endif()
  file(WRITE ${out} "${text}")
endfunction()

set(man ${OUTPUT_DIR}/docs/man)
file(MAKE_DIRECTORY ${man} ${OUTPUT_DIR}/share/bash-completion/completions)
file(GLOB old ${man}/holdcount.1 ${man}/holdcount-*.1)
if(old)
  file(REMOVE ${old})
endif()
holdcount_help(${man}/holdcount.1 --man)
# The commands are those holdcount(1) lists, as ".BR holdcount\-NAME (1)".
file(STRINGS ${man}/holdcount.1 refs REGEX "^\\.BR holdcount\\\\-[a-z]+ \\(1\\)$")
if(NOT refs)
  message(FATAL_ERROR "generate-docs.cmake: holdcount.1 lists no command pages")
endif()
foreach(ref ${refs})
  string(REGEX REPLACE "^\\.BR holdcount\\\\-([a-z]+) .*" "\\1" c "${ref}")
  holdcount_help(${man}/holdcount-${c}.1 --man ${c})
endforeach()
holdcount_help(${OUTPUT_DIR}/share/bash-completion/completions/holdcount --bash-completion)
