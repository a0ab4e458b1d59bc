// Test helper: writes plot tags to files so that outside tools (zbarimg, Python's XML parser, python-stdnum)
// can check them. Used only by the ctest entries of tests/cmake/tags.cmake; exits non-zero on any error.
//
//   pw_tag_writer png   LEVEL MODULE_PX OUT.png PAYLOAD
//   pw_tag_writer svg   LEVEL OUT.svg TRIAL PLOT CAPTION
//   pw_tag_writer sheet LEVEL COLUMNS OUT.svg TRIAL FIRST LAST
//   pw_tag_writer codes TRIAL FIRST LAST          (one human code per line on standard output)
#include "core/error.hpp"
#include "core/tags/payload.hpp"
#include "core/tags/render.hpp"

#include <cstdio>
#include <fstream>
#include <iostream>
#include <string>
#include <vector>

namespace {

void write_file(const std::string& path, const void* data, std::size_t size) {
    std::ofstream out(path, std::ios::binary);
    out.write(static_cast<const char*>(data), static_cast<std::streamsize>(size));
    if (!out) throw pw::Error("cannot write " + path);
}

pw::TagLabel plot_tag(const std::string& trial, int plot, const std::string& caption) {
    return {pw::qr_payload(trial, plot), pw::human_code(trial, plot), caption};
}

int usage() {
    std::cerr << "usage: pw_tag_writer png LEVEL MODULE_PX OUT PAYLOAD\n"
                 "       pw_tag_writer svg LEVEL OUT TRIAL PLOT CAPTION\n"
                 "       pw_tag_writer sheet LEVEL COLUMNS OUT TRIAL FIRST LAST\n"
                 "       pw_tag_writer codes TRIAL FIRST LAST\n";
    return 2;
}

}  // namespace

int main(int argc, char** argv) {
    const std::vector<std::string> a(argv + 1, argv + argc);
    try {
        if (a.size() == 5 && a[0] == "png") {
            const auto png = pw::render_tag_png({a[4], a[4], ""}, pw::ecc_from_string(a[1]), std::stoi(a[2]));
            write_file(a[3], png.data(), png.size());
        } else if (a.size() == 6 && a[0] == "svg") {
            const std::string svg =
                pw::render_tag_svg(plot_tag(a[3], std::stoi(a[4]), a[5]), pw::ecc_from_string(a[1]));
            write_file(a[2], svg.data(), svg.size());
        } else if (a.size() == 7 && a[0] == "sheet") {
            std::vector<pw::TagLabel> tags;
            for (int p = std::stoi(a[5]); p <= std::stoi(a[6]); ++p)
                tags.push_back(plot_tag(a[4], p, "Plot " + std::to_string(p) + " \xC2\xB7 Block " +
                                                     std::to_string(p / 100)));
            const std::string svg = pw::render_tag_sheet_svg(tags, pw::ecc_from_string(a[1]), std::stoi(a[2]));
            write_file(a[3], svg.data(), svg.size());
        } else if (a.size() == 4 && a[0] == "codes") {
            for (int p = std::stoi(a[2]); p <= std::stoi(a[3]); ++p) std::cout << pw::human_code(a[1], p) << '\n';
        } else {
            return usage();
        }
    } catch (const std::exception& e) {
        std::cerr << "pw_tag_writer: " << e.what() << '\n';
        return 1;
    }
    return 0;
}
