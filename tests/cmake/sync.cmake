# Station sync end to end (tests/e2e/sync_checks.py, docs/station.md): bundles imported in several orders and
# twice compared through the sqlite3 shell; refused bundles proved harmless with coreutils sha256sum; exports read
# by Python's csv and json modules; the bundle layout read with struct and hashlib; the audit log edited with the
# sqlite3 shell; a blind handheld's file searched for treatment labels; traits added at the station read back with
# Python's tomllib and compared between station and handheld through the sqlite3 shell; the GeoJSON of a station
# with a conflict read by GDAL's ogrinfo. Debian's python3 is named explicitly.
foreach(case orders faults format exports audit blind traits geojson)
  add_test(NAME "sync: ${case}"
    COMMAND /usr/bin/python3 ${CMAKE_CURRENT_SOURCE_DIR}/e2e/sync_checks.py ${case} $<TARGET_FILE:plotwright>
            ${CMAKE_CURRENT_BINARY_DIR}/e2e-sync-${case})
endforeach()
