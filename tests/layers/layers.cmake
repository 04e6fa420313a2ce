# Checks that the layering of src/CMakeLists.txt is enforced by the build:
# two one-file targets compiled with the sky layer's include path (what a
# file in src/sky/ sees). Neither is built by default; the CTest tests build
# them and read the compiler's answer (check_refusal.cmake).
foreach(kind upward downward)
  add_library(layer_check_${kind} OBJECT EXCLUDE_FROM_ALL ${CMAKE_CURRENT_LIST_DIR}/${kind}_include.cpp)
  target_include_directories(layer_check_${kind} PRIVATE ${PROJECT_BINARY_DIR}/layers/sky)
  target_link_libraries(layer_check_${kind} PRIVATE fulcrum_third_party)
endforeach()

add_test(NAME "layers: a header of a higher layer is refused by the build"
         COMMAND ${CMAKE_COMMAND} -DBUILD_DIR=${PROJECT_BINARY_DIR} -DTARGET=layer_check_upward
                 -DEXPECT=refused -DHEADER=fulcrum/pipeline/galaxy_stages.hpp
                 -P ${CMAKE_CURRENT_LIST_DIR}/check_refusal.cmake)
add_test(NAME "layers: headers of the same and lower layers are accepted by the build"
         COMMAND ${CMAKE_COMMAND} -DBUILD_DIR=${PROJECT_BINARY_DIR} -DTARGET=layer_check_downward
                 -DEXPECT=accepted -P ${CMAKE_CURRENT_LIST_DIR}/check_refusal.cmake)
# Both build in the same build tree: never at the same time.
set_tests_properties("layers: a header of a higher layer is refused by the build"
                     "layers: headers of the same and lower layers are accepted by the build"
                     PROPERTIES RESOURCE_LOCK layer_check_build)
