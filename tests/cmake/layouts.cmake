# Every worked example in layouts/ is designed, listed, tagged, recorded and exported by the executable
# (tests/e2e/layouts_checks.py), one ctest entry per file. Debian's python3 is named explicitly.
file(GLOB PW_LAYOUT_SPECS CONFIGURE_DEPENDS ${PROJECT_SOURCE_DIR}/layouts/*.toml)
foreach(spec ${PW_LAYOUT_SPECS})
  get_filename_component(name ${spec} NAME_WE)
  add_test(NAME "layouts: ${name}"
    COMMAND /usr/bin/python3 ${CMAKE_CURRENT_SOURCE_DIR}/e2e/layouts_checks.py ${spec} $<TARGET_FILE:plotwright>
            ${CMAKE_CURRENT_BINARY_DIR}/layouts-${name})
endforeach()
