# The full-screen recorder driven in a real terminal by tmux (tests/e2e/tui_checks.py), at the handheld's
# 32x12 and at 80x24; the database is read back with plotwright export and the sqlite3 shell.
foreach(size "32;12" "80;24")
  list(GET size 0 w)
  list(GET size 1 h)
  add_test(NAME "tui: record in a ${w}x${h} terminal"
    COMMAND /usr/bin/python3 ${CMAKE_CURRENT_SOURCE_DIR}/e2e/tui_checks.py $<TARGET_FILE:plotwright>
            ${CMAKE_CURRENT_BINARY_DIR}/e2e-tui-${w}x${h} ${w} ${h})
endforeach()

# Power cuts: SIGKILL at random moments of a scripted session, 50 times (tests/e2e/kill_checks.py).
add_test(NAME "record: confirmed values survive 50 kills"
  COMMAND /usr/bin/python3 ${CMAKE_CURRENT_SOURCE_DIR}/e2e/kill_checks.py $<TARGET_FILE:plotwright>
          ${CMAKE_CURRENT_BINARY_DIR}/e2e-kill 50)
