// `plotwright tags`: one QR tag per plot (SVG and/or PNG) and an SVG sheet of all of them.
#include <CLI/CLI.hpp>
#include <fmt/format.h>

#include <filesystem>
#include <iostream>

#include "core/error.hpp"
#include "core/tags/payload.hpp"
#include "core/tags/render.hpp"
#include "firmware_app/app.hpp"
#include "storage/store.hpp"

namespace pw::app {

std::vector<std::string> write_tags(const Store& store, const TagOptions& o) {
    const auto& t = store.trial();
    EccLevel level = ecc_from_string(o.ecc);
    std::error_code ec;
    std::filesystem::create_directories(o.dir, ec);
    if (ec) throw Error(fmt::format("{}: cannot create the folder: {}", o.dir, ec.message()));

    std::vector<TagLabel> labels;
    std::vector<std::string> written;
    for (const auto& p : t.layout.plots) {
        // Tags carry no treatment: a tag is read by whoever scores the plot, blind trial or not.
        TagLabel tag{qr_payload(t.spec.code, p.id), human_code(t.spec.code, p.id),
                     fmt::format("{} plot {} block {}", t.spec.code, p.id, p.block)};
        std::string base = fmt::format("{}/{}-{}", o.dir, t.spec.code, p.id);
        if (o.format != "png") {
            write_file(base + ".svg", render_tag_svg(tag, level));
            written.push_back(base + ".svg");
        }
        if (o.format != "svg") {
            auto png = render_tag_png(tag, level, o.module_px);
            write_file(base + ".png", std::string(png.begin(), png.end()));
            written.push_back(base + ".png");
        }
        labels.push_back(std::move(tag));
    }
    std::string sheet = fmt::format("{}/{}-sheet.svg", o.dir, t.spec.code);
    write_file(sheet, render_tag_sheet_svg(labels, level, 4));
    written.push_back(sheet);
    return written;
}

void add_tags_command(CLI::App& app) {
    auto db = std::make_shared<std::string>();
    auto o = std::make_shared<TagOptions>();
    auto* cmd = app.add_subcommand("tags", "Write a QR tag for every plot (SVG, PNG) and an SVG sheet");
    cmd->add_option("--db", *db, "Trial database")->required()->check(CLI::ExistingFile);
    cmd->add_option("--out", o->dir, "Folder for the tag files (created if absent)")->required();
    cmd->add_option("--format", o->format, "svg, png or both")->check(CLI::IsMember({"svg", "png", "both"}));
    cmd->add_option("--ecc", o->ecc, "QR error correction: L, M, Q (default) or H")
        ->check(CLI::IsMember({"L", "M", "Q", "H"}));
    cmd->add_option("--module-px", o->module_px, "PNG pixels per QR module")->check(CLI::Range(1, 64));
    cmd->callback([db, o] {
        Store store = Store::open(*db);
        auto files = write_tags(store, *o);
        for (const auto& f : files) std::cout << f << "\n";
        std::cerr << fmt::format("{} files written to {}\n", files.size(), o->dir);
    });
}

}  // namespace pw::app
