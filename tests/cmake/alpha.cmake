# Alpha designs (included from tests/CMakeLists.txt).
#   alpha: efficiency factors agree with NumPy   NumPy's eigvalsh on C = R - N K^-1 N' gives the same E as
#                                                plotwright for generated designs, equal and unequal blocks
#   pw_alpha_report  prints E, the upper bound and the time for the sizes in docs/alpha.md; a report, not a
#                    test (times depend on the machine), so it is built but not registered with ctest.
# The check fails when its tool is missing: a check that cannot run must not pass.
add_executable(pw_alpha_design_writer ${CMAKE_CURRENT_SOURCE_DIR}/tools/alpha_design_writer.cpp)
target_link_libraries(pw_alpha_design_writer PRIVATE pw_core)

add_executable(pw_alpha_report ${CMAKE_CURRENT_SOURCE_DIR}/tools/alpha_report.cpp)
target_link_libraries(pw_alpha_report PRIVATE pw_core)

add_test(NAME "alpha: efficiency factors agree with NumPy"
  COMMAND /usr/bin/python3 ${CMAKE_CURRENT_SOURCE_DIR}/tools/alpha_efficiency_check.py
          $<TARGET_FILE:pw_alpha_design_writer>)
