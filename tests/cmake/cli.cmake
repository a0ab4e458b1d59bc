# End-to-end runs of the plotwright executable (tests/e2e/cli_checks.py), checked with outside tools:
# the sqlite3 shell, zbarimg, Python's csv module. Debian's python3 is named explicitly.
set(PW_E2E ${CMAKE_CURRENT_SOURCE_DIR}/e2e/cli_checks.py)
foreach(case reproducible refusals demo-tags help)
  add_test(NAME "cli: ${case}"
    COMMAND /usr/bin/python3 ${PW_E2E} ${case} $<TARGET_FILE:plotwright> ${CMAKE_CURRENT_BINARY_DIR}/e2e-${case})
endforeach()
