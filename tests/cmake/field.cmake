# The field commands (map, stakeout, GeoJSON export, NMEA stake-out) run end to end and checked with outside
# tools: qpdf, pdftotext, Python's xml.etree, GDAL's ogrinfo, GeographicLib's Python port, tmux
# (tests/e2e/field_checks.py). Debian's python3 is named explicitly.
foreach(case map geojson stakeout nmea tui)
  add_test(NAME "field: ${case}"
    COMMAND /usr/bin/python3 ${CMAKE_CURRENT_SOURCE_DIR}/e2e/field_checks.py ${case} $<TARGET_FILE:plotwright>
            ${CMAKE_CURRENT_BINARY_DIR}/e2e-field-${case})
endforeach()
