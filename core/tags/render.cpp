// Plot tags drawn from a QR symbol: SVG text for printing (symbol, human code, caption) and 8-bit grey PNG
// bytes (symbol only). Nothing here touches a file; callers write the returned text or bytes.
//
// Encoding is libqrencode's: QRcode_encodeString with the QR_MODE_8 hint and case-sensitive input lets its
// splitter pick numeric and alphanumeric segments for upper-case payloads (a case-insensitive call would
// upper-case the text and so alter a payload), with the smallest version that holds the payload at the level.
// Geometry (ISO/IEC 18004, from memory): version v has 17 + 4v modules per side; every symbol is drawn inside a
// quiet zone of 4 light modules on each side, so a tag is (17 + 4v + 8) modules across.
// SVG user units are millimetres; one module is kModuleMm. The PNG is the symbol and its quiet zone only:
// printing the human code in a PNG would need a font rasteriser (docs/tags.md).
#include "core/tags/render.hpp"

#include "core/error.hpp"

#include <fmt/format.h>
#include <png.h>
#include <qrencode.h>

#include <algorithm>
#include <cerrno>
#include <memory>
#include <new>

namespace pw {
namespace {

constexpr int kQuietZone = 4;            // modules of light margin on every side (ISO/IEC 18004)
constexpr double kModuleMm = 1.0;        // >= 1 mm modules read at arm's length (common practice)
constexpr double kHumanFontMm = 5.0;     // human code: large, read from a standing position
constexpr double kCaptionFontMm = 3.0;
constexpr double kMonoAdvanceEm = 0.6;   // advance of a monospace glyph, in em (DejaVu Sans Mono: 0.602)
constexpr double kTextPadMm = 2.0;       // blank kept either side of the longest text line
constexpr double kSheetMarginMm = 10.0;
constexpr double kSheetGapMm = 4.0;
constexpr int kMaxModulePx = 100;

QRecLevel to_qrencode(EccLevel level) {
    switch (level) {
        case EccLevel::L: return QR_ECLEVEL_L;
        case EccLevel::M: return QR_ECLEVEL_M;
        case EccLevel::Q: return QR_ECLEVEL_Q;
        case EccLevel::H: return QR_ECLEVEL_H;
    }
    return QR_ECLEVEL_Q;
}

char level_letter(EccLevel level) {
    switch (level) {
        case EccLevel::L: return 'L';
        case EccLevel::M: return 'M';
        case EccLevel::Q: return 'Q';
        case EccLevel::H: return 'H';
    }
    return '?';
}

// Characters shown, counting a UTF-8 sequence once (captions may hold "·").
std::size_t display_length(const std::string& s) {
    return static_cast<std::size_t>(
        std::count_if(s.begin(), s.end(), [](char ch) { return (static_cast<unsigned char>(ch) & 0xC0) != 0x80; }));
}

double mono_width(const std::string& s, double font_mm) {
    return static_cast<double>(display_length(s)) * kMonoAdvanceEm * font_mm;
}

// Text content escaped for XML 1.0; control characters (not allowed in XML 1.0) become spaces.
std::string xml_escape(const std::string& s) {
    std::string out;
    out.reserve(s.size());
    for (char ch : s) {
        switch (ch) {
            case '&': out += "&amp;"; break;
            case '<': out += "&lt;"; break;
            case '>': out += "&gt;"; break;
            case '"': out += "&quot;"; break;
            case '\'': out += "&apos;"; break;
            default:
                out += (static_cast<unsigned char>(ch) < 0x20) ? ' ' : ch;
        }
    }
    return out;
}

std::string mm(double v) { return fmt::format("{:.2f}", v); }

// Size of one tag on paper: the symbol with its quiet zone on top, then the human code, then the caption.
struct TagBox {
    QrMatrix matrix;
    double symbol_mm = 0;   // side of symbol + quiet zone
    double width_mm = 0;
    double height_mm = 0;
};

TagBox measure_tag(const TagLabel& tag, EccLevel level) {
    TagBox box;
    box.matrix = encode_qr(tag.payload, level);
    box.symbol_mm = (box.matrix.width + 2 * kQuietZone) * kModuleMm;
    box.width_mm = std::max({box.symbol_mm, mono_width(tag.human, kHumanFontMm) + 2 * kTextPadMm,
                             mono_width(tag.caption, kCaptionFontMm) + 2 * kTextPadMm});
    // Line heights of 1.2 em below the symbol, and a pad under the caption's descenders.
    box.height_mm = box.symbol_mm + 1.2 * kHumanFontMm + (tag.caption.empty() ? 0.0 : 1.2 * kCaptionFontMm) +
                    kTextPadMm;
    return box;
}

// Dark modules as one path: each horizontal run of dark modules in a row becomes one rectangle.
std::string symbol_path(const QrMatrix& m) {
    std::string d;
    for (int y = 0; y < m.width; ++y) {
        int x = 0;
        while (x < m.width) {
            if (!m.at(x, y)) {
                ++x;
                continue;
            }
            const int start = x;
            while (x < m.width && m.at(x, y)) ++x;
            d += fmt::format("M{} {}h{}v1h-{}z", start + kQuietZone, y + kQuietZone, x - start, x - start);
        }
    }
    return d;
}

// One tag as an SVG group whose box is `cell_w` wide with its top-left corner at (x, y), contents centred.
std::string tag_group(const TagLabel& tag, const TagBox& box, double x, double y, double cell_w) {
    const double centre = cell_w / 2;
    const double symbol_x = (cell_w - box.symbol_mm) / 2;
    const double human_baseline = box.symbol_mm + kHumanFontMm;
    const double caption_baseline = human_baseline + 1.2 * kCaptionFontMm;
    std::string g = fmt::format("<g transform=\"translate({} {})\">\n", mm(x), mm(y));
    g += fmt::format("<rect x=\"0\" y=\"0\" width=\"{}\" height=\"{}\" fill=\"#fff\"/>\n", mm(cell_w),
                     mm(box.height_mm));
    g += fmt::format(
        "<path transform=\"translate({} 0) scale({})\" shape-rendering=\"crispEdges\" fill=\"#000\" d=\"{}\"/>\n",
        mm(symbol_x), kModuleMm, symbol_path(box.matrix));
    g += fmt::format(
        "<text x=\"{}\" y=\"{}\" font-family=\"DejaVu Sans Mono, monospace\" font-size=\"{}\" font-weight=\"bold\" "
        "text-anchor=\"middle\" fill=\"#000\">{}</text>\n",
        mm(centre), mm(human_baseline), kHumanFontMm, xml_escape(tag.human));
    if (!tag.caption.empty())
        g += fmt::format(
            "<text x=\"{}\" y=\"{}\" font-family=\"DejaVu Sans Mono, monospace\" font-size=\"{}\" "
            "text-anchor=\"middle\" fill=\"#000\">{}</text>\n",
            mm(centre), mm(caption_baseline), kCaptionFontMm, xml_escape(tag.caption));
    g += "</g>\n";
    return g;
}

std::string svg_open(double width_mm, double height_mm) {
    return fmt::format(
        "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"
        "<svg xmlns=\"http://www.w3.org/2000/svg\" version=\"1.1\" width=\"{0}mm\" height=\"{1}mm\" "
        "viewBox=\"0 0 {0} {1}\">\n",
        mm(width_mm), mm(height_mm));
}

}  // namespace

EccLevel ecc_from_string(const std::string& s) {
    if (s == "L" || s == "l") return EccLevel::L;
    if (s == "M" || s == "m") return EccLevel::M;
    if (s == "Q" || s == "q") return EccLevel::Q;
    if (s == "H" || s == "h") return EccLevel::H;
    throw InputError(fmt::format("error correction level \"{}\": expected L, M, Q or H", s));
}

QrMatrix encode_qr(const std::string& payload, EccLevel level) {
    if (payload.empty()) throw InputError("QR payload is empty: a tag must carry a plot code");
    if (payload.find('\0') != std::string::npos)
        throw InputError("QR payload holds a NUL character: a tag must carry printable text");

    errno = 0;
    std::unique_ptr<QRcode, decltype(&QRcode_free)> code(
        QRcode_encodeString(payload.c_str(), 0, to_qrencode(level), QR_MODE_8, 1), &QRcode_free);
    if (!code) {
        if (errno == ERANGE)
            throw InputError(fmt::format(
                "QR payload of {} characters is too long for any QR symbol at error correction level {} "
                "(version 40 is the largest)",
                payload.size(), level_letter(level)));
        if (errno == ENOMEM) throw std::bad_alloc();
        throw Error(fmt::format("QR encoder refused the payload \"{}\" (errno {})", payload, errno));
    }

    QrMatrix m;
    m.version = code->version;
    m.width = code->width;
    const std::size_t n = static_cast<std::size_t>(m.width) * static_cast<std::size_t>(m.width);
    m.dark.resize(n);
    // libqrencode: bit 0 of each byte is the module colour (1 = dark); the other bits describe its role.
    for (std::size_t i = 0; i < n; ++i) m.dark[i] = code->data[i] & 1u;
    return m;
}

std::string render_tag_svg(const TagLabel& tag, EccLevel level) {
    const TagBox box = measure_tag(tag, level);
    std::string svg = svg_open(box.width_mm, box.height_mm);
    svg += fmt::format("<title>{}</title>\n", xml_escape(tag.human));
    svg += tag_group(tag, box, 0, 0, box.width_mm);
    svg += "</svg>\n";
    return svg;
}

std::vector<std::uint8_t> render_tag_png(const TagLabel& tag, EccLevel level, int module_px) {
    if (module_px < 1 || module_px > kMaxModulePx)
        throw InputError(fmt::format("PNG module size {} px: expected 1 to {} pixels per module", module_px,
                                     kMaxModulePx));
    const QrMatrix m = encode_qr(tag.payload, level);
    const int side = (m.width + 2 * kQuietZone) * module_px;

    // 8-bit grey, row after row: 255 light, 0 dark.
    std::vector<std::uint8_t> pixels(static_cast<std::size_t>(side) * static_cast<std::size_t>(side), 255);
    for (int py = 0; py < side; ++py) {
        const int my = py / module_px - kQuietZone;
        if (my < 0 || my >= m.width) continue;
        for (int px = 0; px < side; ++px) {
            const int mx = px / module_px - kQuietZone;
            if (mx >= 0 && mx < m.width && m.at(mx, my))
                pixels[static_cast<std::size_t>(py) * static_cast<std::size_t>(side) + static_cast<std::size_t>(px)] = 0;
        }
    }

    png_image image{};
    image.version = PNG_IMAGE_VERSION;
    image.width = static_cast<png_uint_32>(side);
    image.height = static_cast<png_uint_32>(side);
    image.format = PNG_FORMAT_GRAY;
    png_alloc_size_t size = 0;
    // First call measures, second writes (libpng simplified API, png.h).
    if (!png_image_write_to_memory(&image, nullptr, &size, 0, pixels.data(), 0, nullptr))
        throw Error(fmt::format("PNG encoder failed for tag {}: {}", tag.human, image.message));
    std::vector<std::uint8_t> bytes(size);
    if (!png_image_write_to_memory(&image, bytes.data(), &size, 0, pixels.data(), 0, nullptr))
        throw Error(fmt::format("PNG encoder failed for tag {}: {}", tag.human, image.message));
    bytes.resize(size);
    return bytes;
}

std::string render_tag_sheet_svg(const std::vector<TagLabel>& tags, EccLevel level, int columns) {
    if (columns < 1) throw InputError(fmt::format("tag sheet columns {}: expected at least 1", columns));
    if (tags.empty()) throw InputError("tag sheet: no tags to place");

    std::vector<TagBox> boxes;
    boxes.reserve(tags.size());
    double cell_w = 0;
    double cell_h = 0;
    for (const TagLabel& tag : tags) {
        boxes.push_back(measure_tag(tag, level));
        cell_w = std::max(cell_w, boxes.back().width_mm);
        cell_h = std::max(cell_h, boxes.back().height_mm);
    }
    const std::size_t cols = std::min(static_cast<std::size_t>(columns), tags.size());
    const std::size_t rows = (tags.size() + cols - 1) / cols;
    const double page_w = 2 * kSheetMarginMm + static_cast<double>(cols) * cell_w +
                          static_cast<double>(cols - 1) * kSheetGapMm;
    const double page_h = 2 * kSheetMarginMm + static_cast<double>(rows) * cell_h +
                          static_cast<double>(rows - 1) * kSheetGapMm;

    std::string svg = svg_open(page_w, page_h);
    svg += fmt::format("<title>{} plot tags</title>\n", tags.size());
    for (std::size_t i = 0; i < tags.size(); ++i) {
        const double x = kSheetMarginMm + static_cast<double>(i % cols) * (cell_w + kSheetGapMm);
        const double y = kSheetMarginMm + static_cast<double>(i / cols) * (cell_h + kSheetGapMm);
        // Cut guide around the cell, outside the quiet zone.
        svg += fmt::format(
            "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"none\" stroke=\"#bbb\" stroke-width=\"0.2\" "
            "stroke-dasharray=\"1 1\"/>\n",
            mm(x - kSheetGapMm / 4), mm(y - kSheetGapMm / 4), mm(cell_w + kSheetGapMm / 2),
            mm(cell_h + kSheetGapMm / 2));
        svg += tag_group(tags[i], boxes[i], x, y, cell_w);
    }
    svg += "</svg>\n";
    return svg;
}

}  // namespace pw
