// Plot labels drawn with cairo (label_render.hpp): PDF label sheets and rolls, 1-bit PNG thermal labels.
//
// One drawing serves both: a label is laid out by arrange_label (label_geometry.hpp) in the unit of its surface,
// millimetres for PDF (the context is scaled by 72 / 25.4 points per millimetre, 1 pt = 1/72 in) and printer
// dots for PNG (one device pixel per dot). The symbol's dark modules are one path of rectangles, one per
// horizontal run, filled once, so no seam shows between neighbouring modules. On a PNG the module side and the
// symbol's corner are whole dots and the symbol is filled without antialiasing: every module is exactly
// module_dots x module_dots printer dots. Text uses cairo's plain font interface with DejaVu Sans (fontconfig
// picks a stand-in when it is missing); metrics are unhinted so a measurement does not depend on the size.
//
// PNG (W3C PNG specification, ISO/IEC 15948): greyscale colour type 0 at bit depth 1 packs 8 pixels a byte,
// the leftmost in the most significant bit, 0 = black; pHYs gives pixels per metre = dpi / 0.0254.
#include "core/tags/label_render.hpp"

#include "core/error.hpp"

#include <cairo-pdf.h>
#include <cairo.h>
#include <fmt/format.h>
#include <png.h>

#include <algorithm>
#include <cmath>
#include <csetjmp>
#include <limits>
#include <memory>

namespace pw {
namespace {

constexpr double kPointsPerMm = 72.0 / 25.4;   // PDF user space: 1 pt = 1/72 in, 1 in = 25.4 mm
constexpr double kInsetMm = 1.0;       // blank along each label edge: die-cut labels and thermal media shift by
                                       // up to about 1 mm against the print (common practice)
constexpr double kMinEmMm = 1.8;       // smallest caption letters, about 5 pt (from memory: the least that reads
                                       // on a stake at arm's length)
constexpr double kHumanScale = 1.35;   // the human code is this much larger than the caption lines
constexpr double kLinePitch = 1.2;     // line box height, in em
constexpr double kBaseline = 0.95;     // baseline below the top of its line box, in em (DejaVu descent 0.24 em)
constexpr double kTextPadEm = 0.5;     // blank either side of the text lines, in caption em
constexpr double kMinPdfModuleMm = 0.25;  // below this no office printer draws a module reliably (from memory)
constexpr int kMaxLabelDots = 8000;    // 8000 dots = 1 m at 203 dpi, 339 mm at 600 dpi: no thermal label is larger
constexpr const char* kFontFamily = "DejaVu Sans";
constexpr double kMeasureSize = 100.0; // font size used to measure advances (then divided back)

using Surface = std::unique_ptr<cairo_surface_t, decltype(&cairo_surface_destroy)>;
using Context = std::unique_ptr<cairo_t, decltype(&cairo_destroy)>;

void check(cairo_status_t status, const char* what) {
    if (status != CAIRO_STATUS_SUCCESS)
        throw Error(fmt::format("cairo could not {}: {}", what, cairo_status_to_string(status)));
}

cairo_status_t append_to_string(void* closure, const unsigned char* data, unsigned int length) {
    static_cast<std::string*>(closure)->append(reinterpret_cast<const char*>(data), length);
    return CAIRO_STATUS_SUCCESS;
}

// Unhinted metrics: an advance measured at one size scales exactly to another.
void plain_font_options(cairo_t* cr) {
    std::unique_ptr<cairo_font_options_t, decltype(&cairo_font_options_destroy)> options(cairo_font_options_create(),
                                                                                        &cairo_font_options_destroy);
    cairo_font_options_set_hint_metrics(options.get(), CAIRO_HINT_METRICS_OFF);
    cairo_font_options_set_hint_style(options.get(), CAIRO_HINT_STYLE_NONE);
    cairo_set_font_options(cr, options.get());
}

void select_font(cairo_t* cr, bool bold, double size) {
    cairo_select_font_face(cr, kFontFamily, CAIRO_FONT_SLANT_NORMAL,
                           bold ? CAIRO_FONT_WEIGHT_BOLD : CAIRO_FONT_WEIGHT_NORMAL);
    cairo_set_font_size(cr, size);
}

// The text of one label, measured at a caption em of 1 unit.
struct TextBlock {
    struct Line {
        std::string text;
        bool bold = false;
        double scale = 1;     // em of this line / caption em
        double advance = 0;   // width at caption em 1
    };
    std::vector<Line> lines;
    double widest = 0;        // largest advance
    double height = 0;        // sum of line boxes
};

TextBlock measure_text(cairo_t* cr, const PlotLabel& label) {
    TextBlock b;
    b.lines.push_back({label.human, true, kHumanScale, 0});
    for (const std::string& l : label.lines) b.lines.push_back({l, false, 1.0, 0});
    cairo_save(cr);
    for (TextBlock::Line& l : b.lines) {
        select_font(cr, l.bold, kMeasureSize);
        cairo_text_extents_t e;
        cairo_text_extents(cr, l.text.c_str(), &e);
        l.advance = e.x_advance / kMeasureSize * l.scale;
        b.widest = std::max(b.widest, l.advance);
        b.height += kLinePitch * l.scale;
    }
    cairo_restore(cr);
    return b;
}

// The smallest readable text, in the label's unit (min_em = kMinEmMm in that unit).
TextNeed text_need(const TextBlock& b, double min_em) {
    return {(b.widest + 2 * kTextPadEm) * min_em, b.height * min_em};
}

void draw_symbol(cairo_t* cr, const QrMatrix& m, double x0, double y0, double module) {
    cairo_new_path(cr);
    for (int y = 0; y < m.width; ++y) {
        int x = 0;
        while (x < m.width) {
            if (!m.at(x, y)) {
                ++x;
                continue;
            }
            const int start = x;
            while (x < m.width && m.at(x, y)) ++x;
            cairo_rectangle(cr, x0 + (kQuietZoneModules + start) * module, y0 + (kQuietZoneModules + y) * module,
                            (x - start) * module, module);
        }
    }
    cairo_set_source_rgb(cr, 0, 0, 0);
    cairo_fill(cr);
}

// The text lines in the text box: as large as the box allows, the block centred vertically; left-aligned beside
// the symbol, centred under it.
void draw_text(cairo_t* cr, const TextBlock& b, const LabelArrangement& a, double ox, double oy) {
    const double em = std::min(a.text_h / b.height, a.text_w / (b.widest + 2 * kTextPadEm));
    double top = oy + a.text_y + (a.text_h - b.height * em) / 2;
    cairo_set_source_rgb(cr, 0, 0, 0);
    for (const TextBlock::Line& l : b.lines) {
        const double size = em * l.scale;
        const double x = a.text_beside ? ox + a.text_x + kTextPadEm * em
                                       : ox + a.text_x + (a.text_w - l.advance * em) / 2;
        select_font(cr, l.bold, size);
        cairo_move_to(cr, x, top + kBaseline * size);
        cairo_show_text(cr, l.text.c_str());
        top += kLinePitch * size;
    }
}

// One label with its top-left corner at (ox, oy), in millimetres. Returns the module side in mm.
double draw_label_mm(cairo_t* cr, const PlotLabel& label, double ox, double oy, const LabelSize& size,
                     EccLevel level) {
    const QrMatrix m = encode_qr(label.payload, level);
    const TextBlock text = measure_text(cr, label);
    LabelArrangement a;
    try {
        a = arrange_label(size.width_mm, size.height_mm, kInsetMm, m.width + 2 * kQuietZoneModules,
                          text_need(text, kMinEmMm), false, kMinPdfModuleMm);
    } catch (const InputError& e) {
        throw InputError(fmt::format("label {} ({} x {} mm, sizes below in mm): {}", label.human, size.width_mm,
                                     size.height_mm, e.what()));
    }
    draw_symbol(cr, m, ox + a.symbol_x, oy + a.symbol_y, a.module);
    draw_text(cr, text, a, ox, oy);
    return a.module;
}

struct PdfWriter {
    std::string bytes;
    Surface surface{nullptr, &cairo_surface_destroy};
    Context cr{nullptr, &cairo_destroy};

    PdfWriter(double width_mm, double height_mm, const PdfInfo& info) {
        surface.reset(cairo_pdf_surface_create_for_stream(&append_to_string, &bytes, width_mm * kPointsPerMm,
                                                          height_mm * kPointsPerMm));
        check(cairo_surface_status(surface.get()), "start a PDF document");
        cairo_pdf_surface_set_metadata(surface.get(), CAIRO_PDF_METADATA_TITLE, info.title.c_str());
        cairo_pdf_surface_set_metadata(surface.get(), CAIRO_PDF_METADATA_CREATOR, "plotwright");
        if (!info.created_utc.empty())
            cairo_pdf_surface_set_metadata(surface.get(), CAIRO_PDF_METADATA_CREATE_DATE, info.created_utc.c_str());
        cr.reset(cairo_create(surface.get()));
        check(cairo_status(cr.get()), "draw on a PDF page");
        cairo_scale(cr.get(), kPointsPerMm, kPointsPerMm);   // user unit: 1 mm
    }

    std::string finish() {
        check(cairo_status(cr.get()), "draw the labels");
        cr.reset();
        cairo_surface_finish(surface.get());
        check(cairo_surface_status(surface.get()), "finish the PDF document");
        surface.reset();
        return std::move(bytes);
    }
};

// libpng's error callback: jump back to the setjmp in encode_png_1bit (libpng's documented error model).
void png_error_jump(png_structp png, png_const_charp message) {
    auto* text = static_cast<std::string*>(png_get_error_ptr(png));
    if (text) *text = message ? message : "unknown error";
    png_longjmp(png, 1);
}

void png_append(png_structp png, png_bytep data, png_size_t length) {
    auto* out = static_cast<std::vector<std::uint8_t>*>(png_get_io_ptr(png));
    out->insert(out->end(), data, data + length);
}

// `rows` holds height rows of (width + 7) / 8 packed bytes each.
std::vector<std::uint8_t> encode_png_1bit(const std::vector<std::uint8_t>& rows, int width, int height, int dpi,
                                          const std::string& name) {
    std::vector<std::uint8_t> out;
    std::string message;
    png_structp png = png_create_write_struct(PNG_LIBPNG_VER_STRING, &message, &png_error_jump, nullptr);
    if (!png) throw Error(fmt::format("label {}: libpng could not start a PNG", name));
    png_infop info = png_create_info_struct(png);
    if (!info) {
        png_destroy_write_struct(&png, nullptr);
        throw Error(fmt::format("label {}: libpng could not start a PNG", name));
    }
    const std::size_t stride = (static_cast<std::size_t>(width) + 7) / 8;
    std::vector<png_bytep> row_pointers(static_cast<std::size_t>(height));
    for (int y = 0; y < height; ++y)
        row_pointers[static_cast<std::size_t>(y)] =
            const_cast<png_bytep>(rows.data() + static_cast<std::size_t>(y) * stride);
    if (setjmp(png_jmpbuf(png))) {
        png_destroy_write_struct(&png, &info);
        throw Error(fmt::format("label {}: libpng failed: {}", name, message));
    }
    png_set_write_fn(png, &out, &png_append, nullptr);
    png_set_IHDR(png, info, static_cast<png_uint_32>(width), static_cast<png_uint_32>(height), 1, PNG_COLOR_TYPE_GRAY,
                 PNG_INTERLACE_NONE, PNG_COMPRESSION_TYPE_DEFAULT, PNG_FILTER_TYPE_DEFAULT);
    const auto per_metre = static_cast<png_uint_32>(std::lround(dpi / 0.0254));
    png_set_pHYs(png, info, per_metre, per_metre, PNG_RESOLUTION_METER);
    png_set_rows(png, info, row_pointers.data());
    png_write_png(png, info, PNG_TRANSFORM_IDENTITY, nullptr);
    png_destroy_write_struct(&png, &info);
    return out;
}

}  // namespace

LabelDocument render_label_sheets_pdf(const std::vector<PlotLabel>& labels, const SheetGeometry& sheet,
                                      EccLevel level, const PdfInfo& info) {
    check_sheet(sheet);
    if (labels.empty()) throw InputError("label sheets: no labels to print");
    const PaperSize page = paper_size(sheet.paper);
    const LabelSize size{sheet.label_width_mm, sheet.label_height_mm};
    PdfWriter w(page.width_mm, page.height_mm, info);
    LabelDocument doc;
    doc.smallest_module_mm = std::numeric_limits<double>::infinity();
    std::size_t page_drawn = 0;
    for (std::size_t i = 0; i < labels.size(); ++i) {
        const LabelSlot slot = sheet_slot(sheet, i);
        for (; page_drawn < slot.page; ++page_drawn) cairo_show_page(w.cr.get());
        doc.smallest_module_mm =
            std::min(doc.smallest_module_mm, draw_label_mm(w.cr.get(), labels[i], slot.x_mm, slot.y_mm, size, level));
    }
    cairo_show_page(w.cr.get());
    doc.pages = page_drawn + 1;
    doc.pdf = w.finish();
    return doc;
}

LabelDocument render_label_roll_pdf(const std::vector<PlotLabel>& labels, const LabelSize& size, EccLevel level,
                                    const PdfInfo& info) {
    if (!(size.width_mm > 0) || !(size.height_mm > 0))
        throw InputError(fmt::format("--roll {}x{}: a label's width and height must be greater than 0 mm",
                                     size.width_mm, size.height_mm));
    if (labels.empty()) throw InputError("label roll: no labels to print");
    PdfWriter w(size.width_mm, size.height_mm, info);
    LabelDocument doc;
    doc.smallest_module_mm = std::numeric_limits<double>::infinity();
    for (const PlotLabel& label : labels) {
        doc.smallest_module_mm = std::min(doc.smallest_module_mm, draw_label_mm(w.cr.get(), label, 0, 0, size, level));
        cairo_show_page(w.cr.get());
        ++doc.pages;
    }
    doc.pdf = w.finish();
    return doc;
}

ThermalLabel render_label_png(const PlotLabel& label, const LabelSize& size, int dpi, EccLevel level) {
    const double dpm = dots_per_mm(dpi);
    ThermalLabel t;
    t.width_dots = mm_to_dots(size.width_mm, dpi);
    t.height_dots = mm_to_dots(size.height_mm, dpi);
    if (t.width_dots < 1 || t.height_dots < 1 || t.width_dots > kMaxLabelDots || t.height_dots > kMaxLabelDots)
        throw InputError(fmt::format("label {} x {} mm at {} dpi is {} x {} dots: expected 1 to {} dots a side",
                                     size.width_mm, size.height_mm, dpi, t.width_dots, t.height_dots, kMaxLabelDots));

    Surface surface(cairo_image_surface_create(CAIRO_FORMAT_A8, t.width_dots, t.height_dots), &cairo_surface_destroy);
    check(cairo_surface_status(surface.get()), "make an image for a thermal label");
    Context cr(cairo_create(surface.get()), &cairo_destroy);
    check(cairo_status(cr.get()), "draw a thermal label");
    plain_font_options(cr.get());

    const QrMatrix m = encode_qr(label.payload, level);
    const TextBlock text = measure_text(cr.get(), label);
    const double inset = std::round(kInsetMm * dpm);
    LabelArrangement a;
    try {
        a = arrange_label(t.width_dots, t.height_dots, inset, m.width + 2 * kQuietZoneModules,
                          text_need(text, kMinEmMm * dpm), true, 1.0);
    } catch (const InputError& e) {
        throw InputError(fmt::format("label {} ({} x {} mm = {} x {} dots at {} dpi, sizes below in dots): {}",
                                     label.human, size.width_mm, size.height_mm, t.width_dots, t.height_dots, dpi,
                                     e.what()));
    }
    t.module_dots = static_cast<int>(a.module);

    // Ink is alpha: 0 blank, 255 black. The symbol sits on whole dots and is filled without antialiasing.
    cairo_set_antialias(cr.get(), CAIRO_ANTIALIAS_NONE);
    draw_symbol(cr.get(), m, a.symbol_x, a.symbol_y, a.module);
    cairo_set_antialias(cr.get(), CAIRO_ANTIALIAS_DEFAULT);
    draw_text(cr.get(), text, a, 0, 0);
    check(cairo_status(cr.get()), "draw a thermal label");
    cairo_surface_flush(surface.get());

    // Threshold at half coverage: a printer dot is either burnt or not.
    const unsigned char* data = cairo_image_surface_get_data(surface.get());
    const int stride = cairo_image_surface_get_stride(surface.get());
    const std::size_t row_bytes = (static_cast<std::size_t>(t.width_dots) + 7) / 8;
    std::vector<std::uint8_t> rows(row_bytes * static_cast<std::size_t>(t.height_dots), 0xFF);
    for (int y = 0; y < t.height_dots; ++y)
        for (int x = 0; x < t.width_dots; ++x)
            if (data[static_cast<std::size_t>(y) * static_cast<std::size_t>(stride) + static_cast<std::size_t>(x)] >=
                128)
                rows[static_cast<std::size_t>(y) * row_bytes + static_cast<std::size_t>(x / 8)] &=
                    static_cast<std::uint8_t>(~(0x80u >> (x % 8)));
    t.png = encode_png_1bit(rows, t.width_dots, t.height_dots, dpi, label.human);
    return t;
}

}  // namespace pw
