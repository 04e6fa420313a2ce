# Registers every Catch2 test case as its own CTest test, and the Python
# reference scripts under tests/python/ (each compares fulcrum with a
# general-purpose reference library from Debian).
include(Catch)
catch_discover_tests(fulcrum_tests
    WORKING_DIRECTORY ${PROJECT_BINARY_DIR}
    PROPERTIES ENVIRONMENT "OMP_NUM_THREADS=1")
