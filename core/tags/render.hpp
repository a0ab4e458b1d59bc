// QR symbols for plot tags (libqrencode, alphanumeric mode) drawn as SVG text and 8-bit grey PNG bytes.
// A quiet zone of 4 modules surrounds every symbol (ISO/IEC 18004). No file is written here.
#pragma once
#include <cstdint>
#include <string>
#include <vector>

namespace pw {

enum class EccLevel { L, M, Q, H };
EccLevel ecc_from_string(const std::string& s);  // "L","M","Q","H"; throws InputError

// Light modules kept around every symbol on each side (ISO/IEC 18004 quiet zone).
inline constexpr int kQuietZoneModules = 4;

struct QrMatrix {
    int version = 0;
    int width = 0;                     // modules per side, without quiet zone
    std::vector<std::uint8_t> dark;    // width*width, 1 = dark module
    bool at(int x, int y) const { return dark[static_cast<std::size_t>(y) * width + x] != 0; }
};

QrMatrix encode_qr(const std::string& payload, EccLevel level);

struct TagLabel {
    std::string payload;      // what the symbol encodes
    std::string human;        // printed under the symbol
    std::string caption;      // e.g. "Plot 103 · Block 1"
};

// One tag as a standalone SVG document.
std::string render_tag_svg(const TagLabel& tag, EccLevel level);
// One tag as PNG bytes; `module_px` pixels per module.
std::vector<std::uint8_t> render_tag_png(const TagLabel& tag, EccLevel level, int module_px);
// All tags on one SVG sheet, in the given order, `columns` across.
std::string render_tag_sheet_svg(const std::vector<TagLabel>& tags, EccLevel level, int columns);

}  // namespace pw
