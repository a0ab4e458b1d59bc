# `plotwright plan` end to end (tests/e2e/plan_checks.py), against R 4.2.2 run at test time (Rscript) and the
# EPPO residual-df rule. Debian's python3 is named explicitly.
foreach(case against-r warning)
  add_test(NAME "plan: ${case}"
    COMMAND /usr/bin/python3 ${CMAKE_CURRENT_SOURCE_DIR}/e2e/plan_checks.py ${case} $<TARGET_FILE:plotwright>)
endforeach()
