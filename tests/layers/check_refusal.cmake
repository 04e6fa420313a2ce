# cmake -DBUILD_DIR=... -DTARGET=... -DEXPECT=refused|accepted [-DHEADER=...] -P check_refusal.cmake
# Builds one layer-check target and fails unless the build's answer is the
# expected one; a refusal must be the compiler not finding HEADER (not some
# other error).
execute_process(COMMAND ${CMAKE_COMMAND} --build ${BUILD_DIR} --target ${TARGET}
                RESULT_VARIABLE rc OUTPUT_VARIABLE out ERROR_VARIABLE err)
set(all "${out}${err}")
if(EXPECT STREQUAL "accepted")
  if(NOT rc EQUAL 0)
    message(FATAL_ERROR "expected ${TARGET} to build, but it failed:\n${all}")
  endif()
elseif(EXPECT STREQUAL "refused")
  if(rc EQUAL 0)
    message(FATAL_ERROR "expected the build to refuse ${TARGET} (it includes ${HEADER} from a lower layer), but it built")
  endif()
  string(FIND "${all}" "${HEADER}: No such file" at)
  if(at EQUAL -1)
    message(FATAL_ERROR "${TARGET} failed, but not because ${HEADER} was hidden:\n${all}")
  endif()
  message(STATUS "refused as expected: ${HEADER} is not visible to the sky layer")
else()
  message(FATAL_ERROR "EXPECT must be refused or accepted, not '${EXPECT}'")
endif()
