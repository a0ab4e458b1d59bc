# `plotwright analyze` against R run live (tests/e2e/analyze_checks.py): every design from a CSV with the
# role flags, and every worked example of layouts/ designed, recorded and analysed from its database.
# R 4.2.2 (Rscript, with MASS) is the reference; without Rscript the checks are skipped (exit 77).
set(PW_ANALYZE_CHECKS ${CMAKE_CURRENT_SOURCE_DIR}/e2e/analyze_checks.py)
foreach(case oats npk orchardsprays strip augmented alpha plantgrowth sleep)
  add_test(NAME "analyze: csv ${case} as R"
    COMMAND /usr/bin/python3 ${PW_ANALYZE_CHECKS} csv ${case} $<TARGET_FILE:plotwright>
            ${CMAKE_CURRENT_SOURCE_DIR}/data/stats/designs ${CMAKE_CURRENT_BINARY_DIR}/analyze-csv-${case})
  set_tests_properties("analyze: csv ${case} as R" PROPERTIES SKIP_RETURN_CODE 77)
endforeach()
file(GLOB PW_ANALYZE_LAYOUTS CONFIGURE_DEPENDS ${PROJECT_SOURCE_DIR}/layouts/*.toml)
foreach(spec ${PW_ANALYZE_LAYOUTS})
  get_filename_component(name ${spec} NAME_WE)
  add_test(NAME "analyze: db ${name} as R"
    COMMAND /usr/bin/python3 ${PW_ANALYZE_CHECKS} db ${spec} $<TARGET_FILE:plotwright>
            ${CMAKE_CURRENT_BINARY_DIR}/analyze-db-${name})
  set_tests_properties("analyze: db ${name} as R" PROPERTIES SKIP_RETURN_CODE 77)
endforeach()
