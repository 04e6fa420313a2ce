# Registers every Catch2 test case as its own CTest test, and the Python
# reference scripts under tests/python/ (each compares fulcrum with a
# general-purpose reference library from Debian).
include(Catch)
catch_discover_tests(fulcrum_tests
    WORKING_DIRECTORY ${PROJECT_BINARY_DIR}
    PROPERTIES ENVIRONMENT "OMP_NUM_THREADS=1")

# The Python module's tests (tests/python_module/, pytest with Debian's
# python3 and the build folder on PYTHONPATH), when the module is built.
if(TARGET fulcrum_python)
  add_test(NAME python_module
           COMMAND /usr/bin/python3 -m pytest -q -p no:cacheprovider ${PROJECT_SOURCE_DIR}/tests/python_module)
  set_tests_properties(python_module PROPERTIES
      WORKING_DIRECTORY ${PROJECT_BINARY_DIR}
      ENVIRONMENT "PYTHONPATH=${PROJECT_BINARY_DIR};PYTHONDONTWRITEBYTECODE=1;OMP_NUM_THREADS=1;FULCRUM_BINARY=$<TARGET_FILE:fulcrum>")
endif()

# A sample on a real Slurm cluster of one node that the test starts and stops
# itself (tests/cluster/slurm_sample.py; Debian's slurm-wlm and munge, root).
# Exit 77 is a skip, reported with the reason: the daemons cannot start here.
foreach(case array requeue slurm-requeue)
  if(case STREQUAL "array")
    set(what "a job array of shards plus the merge equals the unsharded run")
  elseif(case STREQUAL "requeue")
    set(what "a shard killed with SIGKILL and submitted again still merges to the unsharded run")
  else()
    set(what "a shard requeued by scontrol while it runs still merges to the unsharded run")
  endif()
  add_test(NAME "slurm: ${what}"
           COMMAND /usr/bin/python3 ${PROJECT_SOURCE_DIR}/tests/cluster/slurm_sample.py
                   --fulcrum $<TARGET_FILE:fulcrum> --case ${case})
  set_tests_properties("slurm: ${what}" PROPERTIES SKIP_RETURN_CODE 77 TIMEOUT 180
                       RESOURCE_LOCK slurm_test_cluster LABELS slurm)
endforeach()
