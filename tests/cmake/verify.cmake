# `plotwright verify` end to end (tests/e2e/verify_checks.py, docs/certificate.md): the canonical text hashed
# by coreutils sha256sum and rebuilt independently from `plotwright plots`; plots, digest and algorithm id
# edited with the sqlite3 shell. Debian's python3 is named explicitly.
foreach(case untouched sha256sum plots-edited digest-edited algorithm)
  add_test(NAME "verify: ${case}"
    COMMAND /usr/bin/python3 ${CMAKE_CURRENT_SOURCE_DIR}/e2e/verify_checks.py ${case} $<TARGET_FILE:plotwright>
            ${CMAKE_CURRENT_BINARY_DIR}/e2e-verify-${case})
endforeach()
