# Makes the man page cavitas.1.gz (or cavitas.1 without gzip) from the help
# texts of a built cavitas; run by the build (src/CMakeLists.txt):
#   cmake -DCAVITAS=EXE -DHELP2MAN=... -DPERL=... [-DGZIP=...] -DMODULE_RELDIR=DIR -DOUT_DIR=DIR -P man_page.cmake
foreach(v CAVITAS HELP2MAN PERL MODULE_RELDIR OUT_DIR)
  if(NOT DEFINED ${v})
    message(FATAL_ERROR "man_page.cmake: -D${v}=... is required")
  endif()
endforeach()
set(_include "${OUT_DIR}/cavitas.h2m")
set(_page "${OUT_DIR}/cavitas.1")
file(REMOVE "${_page}" "${_page}.gz")
execute_process(COMMAND "${PERL}" "${CMAKE_CURRENT_LIST_DIR}/man_sections.pl" "${CAVITAS}" "${MODULE_RELDIR}"
                OUTPUT_FILE "${_include}" RESULT_VARIABLE rc)
if(NOT rc EQUAL 0)
  message(FATAL_ERROR "man page: man_sections.pl failed (${rc})")
endif()
execute_process(COMMAND "${HELP2MAN}" --no-info --name "cavitation finder for pumps and hydro turbines"
                        --section 1 --include "${_include}" --output "${_page}" "${CAVITAS}"
                RESULT_VARIABLE rc)
if(NOT rc EQUAL 0)
  message(FATAL_ERROR "man page: help2man failed (${rc})")
endif()
if(GZIP)
  # -n: no file name or time stamp inside, so the same page compresses to the same bytes.
  execute_process(COMMAND "${GZIP}" -9 -n -f "${_page}" RESULT_VARIABLE rc)
  if(NOT rc EQUAL 0)
    message(FATAL_ERROR "man page: gzip failed (${rc})")
  endif()
endif()
