# `plotwright report` end to end on the demo's invented trial (tests/e2e/report_checks.py): the page parsed by
# Python's html.parser and xml.etree, self-contained; its numbers against `analyze --json` (consistency) and
# against R 4.2.2's aov run live (validation); the blind copy; the colour scales against R's RColorBrewer; a
# headless render by Debian's chromium. Checks whose outside tool is absent exit 77 (skipped).
set(PW_REPORT_CHECKS ${CMAKE_CURRENT_SOURCE_DIR}/e2e/report_checks.py)
foreach(check page json r blind colours chromium)
  add_test(NAME "report: ${check}"
    COMMAND /usr/bin/python3 ${PW_REPORT_CHECKS} ${check} $<TARGET_FILE:plotwright>
            ${CMAKE_CURRENT_BINARY_DIR}/e2e-report-${check})
  set_tests_properties("report: ${check}" PROPERTIES SKIP_RETURN_CODE 77)
endforeach()
set_tests_properties("report: chromium" PROPERTIES TIMEOUT 300)
