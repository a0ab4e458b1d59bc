// Printable plot labels drawn with cairo: label sheets and label rolls as PDF, and 1-bit PNG images for thermal
// label printers. Each label holds the QR symbol with its 4-module quiet zone (ISO/IEC 18004), the human code
// in large bold letters, then a few caption lines (plot, block, trial, and the treatment when asked for).
// Nothing here touches a file: the PDF and PNG bytes are built in memory (cairo_*_create_for_stream, libpng
// with a write callback) and returned. Where labels go is label_geometry.hpp.
//
// Only built with cairo (PW_HAVE_LABELS): a build without cairo offers SVG and symbol PNGs only.
#pragma once
#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

#include "core/tags/label_geometry.hpp"
#include "core/tags/render.hpp"

namespace pw {

struct PlotLabel {
    std::string payload;             // what the symbol encodes (qr_payload)
    std::string human;               // the human code, printed largest (human_code)
    std::vector<std::string> lines;  // printed under the human code, in this order ("Plot 103  Block 1", ...)
};

// Document facts written into the PDF's information dictionary.
struct PdfInfo {
    std::string title;          // e.g. "SORG26 plot labels"
    std::string created_utc;    // ISO 8601 "YYYY-MM-DDTHH:MM:SSZ", the CreationDate (empty: cairo's clock)
};

struct LabelDocument {
    std::string pdf;            // the PDF bytes
    std::size_t pages = 0;
    double smallest_module_mm = 0;   // the smallest QR module on any label
};

// Label sheets: the labels in the given order, across then down, sheet after sheet (sheet_slot). The geometry
// is checked first (check_sheet). Throws InputError when a label cannot hold its symbol and text.
LabelDocument render_label_sheets_pdf(const std::vector<PlotLabel>& labels, const SheetGeometry& sheet,
                                      EccLevel level, const PdfInfo& info);
// A label roll: one label per page, each page the size of the label.
LabelDocument render_label_roll_pdf(const std::vector<PlotLabel>& labels, const LabelSize& size, EccLevel level,
                                    const PdfInfo& info);

struct ThermalLabel {
    std::vector<std::uint8_t> png;   // greyscale, bit depth 1 (0 black, 1 white), pHYs = the printer's dpi
    int width_dots = 0;
    int height_dots = 0;
    int module_dots = 0;             // every QR module is exactly this many dots square
};

// One label for a thermal printer of `dpi` dots per inch (203, 300 or 600): the label's size in whole dots,
// the symbol in whole dots per module, as large as the label allows beside or above its text; the text drawn
// with cairo and thresholded at half coverage to black or white.
ThermalLabel render_label_png(const PlotLabel& label, const LabelSize& size, int dpi, EccLevel level);

}  // namespace pw
