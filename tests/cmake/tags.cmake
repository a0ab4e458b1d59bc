# Plot tags checked by outside tools (included from tests/CMakeLists.txt).
#   tags: PNG tags decode with zbarimg            every PNG from render_tag_png reads back as its payload
#   tags: SVG tags parse and decode as printed    Python's xml.dom.minidom parses tags and sheets; their symbol
#                                                 paths, filled in, read back with zbarimg as the printed codes
#   tags: check characters agree with stdnum      python-stdnum's ISO 7064 MOD 37,36 gives every check character
# Each script fails its test when its tool is missing: a check that cannot run must not pass.
add_executable(pw_tag_writer ${CMAKE_CURRENT_SOURCE_DIR}/tools/tag_writer.cpp)
target_link_libraries(pw_tag_writer PRIVATE pw_tags pw_core)

find_program(PW_ZBARIMG zbarimg)
set(PW_SYSTEM_PYTHON /usr/bin/python3)  # Debian's python3 (another one may come first on PATH)

add_test(NAME "tags: PNG tags decode with zbarimg"
  COMMAND sh ${CMAKE_CURRENT_SOURCE_DIR}/tools/tags_zbar_roundtrip.sh $<TARGET_FILE:pw_tag_writer> ${PW_ZBARIMG}
          ${CMAKE_CURRENT_BINARY_DIR}/tags-png)
add_test(NAME "tags: SVG tags parse and decode as printed"
  COMMAND ${PW_SYSTEM_PYTHON} ${CMAKE_CURRENT_SOURCE_DIR}/tools/tags_svg_check.py $<TARGET_FILE:pw_tag_writer>
          ${PW_ZBARIMG} ${CMAKE_CURRENT_BINARY_DIR}/tags-svg)
add_test(NAME "tags: check characters agree with stdnum"
  COMMAND ${PW_SYSTEM_PYTHON} ${CMAKE_CURRENT_SOURCE_DIR}/tools/tags_stdnum_check.py $<TARGET_FILE:pw_tag_writer>)
