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
