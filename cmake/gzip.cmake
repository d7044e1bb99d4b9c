# cmake -DGZIP=gzip -DINPUT=FILE -DOUTPUT=FILE.gz -P gzip.cmake
#
# Compresses one manual page as Debian policy asks (gzip -9n, from memory:
# best compression, no file name or time stamp in the header, so the same
# page always gives the same bytes).  Written to a temporary name, then
# renamed, so an interrupted build leaves no half-written page behind.
foreach(var GZIP INPUT OUTPUT)
  if(NOT DEFINED ${var})
    message(FATAL_ERROR "gzip.cmake: -D${var}=... is required")
  endif()
endforeach()
execute_process(COMMAND ${GZIP} -9nc ${INPUT} OUTPUT_FILE ${OUTPUT}.tmp RESULT_VARIABLE rc)
if(NOT rc EQUAL 0)
  file(REMOVE ${OUTPUT}.tmp)
  message(FATAL_ERROR "gzip.cmake: '${GZIP} -9nc ${INPUT}' exit status ${rc}")
endif()
file(RENAME ${OUTPUT}.tmp ${OUTPUT})
