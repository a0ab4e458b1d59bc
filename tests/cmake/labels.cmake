# Printable plot labels checked by outside tools (tests/e2e/labels_checks.py; included from tests/CMakeLists.txt):
#   labels: every sheet preset decodes once per plot   each preset's PDF (and a Letter grid given by options, in
#                                                      stake order) passes qpdf --check; pdftoppm -r 300 pages,
#                                                      cut into label cells, decode with zbarimg to every plot's
#                                                      payload exactly once, in print order; pdftotext reads the
#                                                      human codes, and the treatments only when asked for
#   labels: label rolls print one label a page         --roll PDFs: page size, one payload per page, in order
#   labels: thermal PNGs are 1-bit with whole-dot modules   203/300/600 dpi PNGs read with zlib/struct: 1-bit
#                                                      greyscale, pHYs, size in whole dots, module size measured
#                                                      from the finder patterns, quiet zone; zbarimg decodes each
#   labels: bad geometry and blind treatments are refused   messages name the option and the overflow in mm
# The script fails its test when a tool (qpdf, poppler-utils, zbar-tools) is missing.
foreach(case sheets roll thermal refusals)
  if(case STREQUAL "sheets")
    set(name "every sheet preset decodes once per plot")
  elseif(case STREQUAL "roll")
    set(name "label rolls print one label a page")
  elseif(case STREQUAL "thermal")
    set(name "thermal PNGs are 1-bit with whole-dot modules")
  else()
    set(name "bad geometry and blind treatments are refused")
  endif()
  add_test(NAME "labels: ${name}"
    COMMAND /usr/bin/python3 ${CMAKE_CURRENT_SOURCE_DIR}/e2e/labels_checks.py ${case} $<TARGET_FILE:plotwright>
            ${CMAKE_CURRENT_BINARY_DIR}/e2e-labels-${case})
endforeach()
