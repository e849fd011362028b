# Runs the clones check built for the processor (CLONED) and built without
# clones (PORTABLE) and fails unless both print the same digest.
execute_process(COMMAND ${CLONED} OUTPUT_VARIABLE a RESULT_VARIABLE ra)
execute_process(COMMAND ${PORTABLE} OUTPUT_VARIABLE b RESULT_VARIABLE rb)
message(STATUS "processor's version:\n${a}baseline x86-64 version:\n${b}")
if(NOT ra EQUAL 0 OR NOT rb EQUAL 0)
  message(FATAL_ERROR "a clones check program failed (${ra}, ${rb})")
endif()
string(REGEX MATCH "digest [0-9a-f]+" da "${a}")
string(REGEX MATCH "digest [0-9a-f]+" db "${b}")
if(da STREQUAL "" OR NOT da STREQUAL db)
  message(FATAL_ERROR "the cloned loops give different results: '${da}' against '${db}'")
endif()
