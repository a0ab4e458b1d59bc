// `plotwright tags`: a QR tag for every plot.
//
//   --format svg|png|both   one SVG and/or symbol PNG per plot and an SVG sheet, into the folder --out
//   --format pdf            label sheets (--sheet preset or the grid in mm) or a label roll (--roll WxH), into
//                           the PDF file --out
//   --format png --dpi N    one 1-bit PNG per label for a thermal printer of N dots per inch, label size from
//                           --roll or the sheet options, into the folder --out
// Labels are printed in walking order or stake order (--order), and carry the treatment only when asked for
// (--show-treatment) and the trial is not blind. The drawing is core/tags (label_geometry, label_render); this
// file parses, picks the geometry and writes the files.
#include <CLI/CLI.hpp>
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <cmath>
#include <filesystem>
#include <iostream>

#include "core/error.hpp"
#include "core/tags/label_geometry.hpp"
#include "core/tags/payload.hpp"
#include "core/tags/render.hpp"
#ifdef PW_HAVE_LABELS
#include "core/tags/label_render.hpp"
#endif
#include "firmware_app/app.hpp"
#include "storage/store.hpp"

namespace pw::app {
namespace {

constexpr double kSmallModuleMm = 0.5;   // 4 dots at 203 dpi: the least for field tags (common practice)
constexpr int kSmallModuleDots = 4;      // printer dots per module, same source
constexpr const char* kDefaultSheet = "a4-3x8";

void make_folder(const std::string& dir) {
    std::error_code ec;
    std::filesystem::create_directories(dir, ec);
    if (ec) throw Error(fmt::format("{}: cannot create the folder: {}", dir, ec.message()));
}

// The treatment label of a plot, refused on a blind trial (blind scoring: tags are read by the scorer).
void check_treatment_allowed(const StoredTrial& t, bool show_treatment) {
    if (show_treatment && t.spec.blind)
        throw InputError(fmt::format(
            "--show-treatment: trial {} is blind (trial.blind = true in {}): its tags are read by the people who "
            "score the plots, so they must not name the treatment; leave out --show-treatment",
            t.spec.code, t.spec_source.empty() ? "its spec" : t.spec_source));
}

std::string treatment_label(const StoredTrial& t, const PlotPlacement& p) {
    if (p.treatment < 0 || static_cast<std::size_t>(p.treatment) >= t.spec.treatments.size())
        throw StoreError(fmt::format("plot {}: treatment index {} is not one of the trial's {} treatments", p.id,
                                     p.treatment, t.spec.treatments.size()));
    return t.spec.treatments[static_cast<std::size_t>(p.treatment)].label;
}

std::vector<PlotPlacement> plots_in_order(const StoredTrial& t, const std::string& order) {
    return order_plots(t.layout.plots, label_order_from_string(order));
}

// Command-line values of the label options, with what the user actually gave.
struct LabelOptions {
    std::string sheet;
    std::string page;
    double label_width = 0, label_height = 0, top = 0, left = 0, gap_x = 0, gap_y = 0;
    int columns = 0, rows = 0;
    std::string roll;
    int dpi = 0;
    bool list_sheets = false;
    bool json = false;
    std::vector<CLI::Option*> grid;   // --page ... --gap-y: given ones override the preset
};

// TagOptions (app.hpp) with what this command adds to every format: the print order and the treatment line.
struct PrintOptions : TagOptions {
    std::string order = "walk";      // walk | stake (core/tags/label_geometry.hpp)
    bool show_treatment = false;     // refused on a blind trial
};

bool given(const CLI::Option* o) { return o && o->count() > 0; }

bool any_grid_option(const LabelOptions& l) {
    for (const CLI::Option* o : l.grid)
        if (given(o)) return true;
    return false;
}

nlohmann::json sheet_json(const SheetGeometry& g) {
    return {{"page", to_string(g.paper)},   {"label_width_mm", g.label_width_mm},
            {"label_height_mm", g.label_height_mm}, {"columns", g.columns},
            {"rows", g.rows},               {"top_mm", g.top_mm},
            {"left_mm", g.left_mm},         {"gap_x_mm", g.gap_x_mm},
            {"gap_y_mm", g.gap_y_mm}};
}

void list_sheets(bool json) {
    if (json) {
        nlohmann::json a = nlohmann::json::array();
        for (const SheetPreset& p : sheet_presets()) {
            nlohmann::json j = sheet_json(p.geometry);
            j["name"] = p.name;
            j["description"] = p.description;
            a.push_back(j);
        }
        std::cout << a.dump(2) << "\n";
        return;
    }
    for (const SheetPreset& p : sheet_presets()) {
        const SheetGeometry& g = p.geometry;
        std::cout << fmt::format("{:<12} {}  (--page {} --label-width {:g} --label-height {:g} --columns {} --rows {} "
                                 "--top {:g} --left {:g} --gap-x {:g} --gap-y {:g})\n",
                                 p.name, p.description, to_string(g.paper), g.label_width_mm, g.label_height_mm,
                                 g.columns, g.rows, g.top_mm, g.left_mm, g.gap_x_mm, g.gap_y_mm);
    }
}

// One SVG and/or PNG per plot and an SVG sheet (write_tags in app.hpp), in the asked order.
std::vector<std::string> write_tag_files(const Store& store, const PrintOptions& o) {
    const auto& t = store.trial();
    check_treatment_allowed(t, o.show_treatment);
    EccLevel level = ecc_from_string(o.ecc);
    make_folder(o.dir);

    std::vector<TagLabel> labels;
    std::vector<std::string> written;
    for (const auto& p : plots_in_order(t, o.order)) {
        // The treatment only when asked for, and never on a blind trial (checked above).
        std::string caption = fmt::format("{} plot {} block {}", t.spec.code, p.id, p.block);
        if (o.show_treatment) caption += " \xc2\xb7 " + treatment_label(t, p);
        TagLabel tag{qr_payload(t.spec.code, p.id), human_code(t.spec.code, p.id), caption};
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

#ifdef PW_HAVE_LABELS
// The sheet: a preset (default a4-3x8) with any grid option given replacing its value; or, with grid options
// and no preset, the grid exactly as given. Not checked.
SheetGeometry sheet_options(const LabelOptions& l) {
    SheetGeometry g;
    if (!l.sheet.empty() || !any_grid_option(l)) g = sheet_preset(l.sheet.empty() ? kDefaultSheet : l.sheet).geometry;
    const auto take = [&](std::size_t i, auto& field, auto value) {
        if (given(l.grid[i])) field = value;
    };
    if (given(l.grid[0])) g.paper = paper_from_string(l.page);
    take(1, g.label_width_mm, l.label_width);
    take(2, g.label_height_mm, l.label_height);
    take(3, g.columns, l.columns);
    take(4, g.rows, l.rows);
    take(5, g.top_mm, l.top);
    take(6, g.left_mm, l.left);
    take(7, g.gap_x_mm, l.gap_x);
    take(8, g.gap_y_mm, l.gap_y);
    return g;
}

SheetGeometry sheet_from_options(const LabelOptions& l) {
    SheetGeometry g = sheet_options(l);
    check_sheet(g);
    return g;
}

// A thermal label's size: --roll, or the label size of the sheet options (only the size is used).
LabelSize thermal_label_size(const LabelOptions& l) {
    if (!l.roll.empty()) return parse_roll(l.roll);
    const SheetGeometry g = sheet_options(l);
    if (!(g.label_width_mm > 0))
        throw InputError(fmt::format("--label-width {} mm: a label's width must be greater than 0 mm", g.label_width_mm));
    if (!(g.label_height_mm > 0))
        throw InputError(
            fmt::format("--label-height {} mm: a label's height must be greater than 0 mm", g.label_height_mm));
    return {g.label_width_mm, g.label_height_mm};
}

std::vector<PlotLabel> plot_labels(const StoredTrial& t, const PrintOptions& o) {
    std::vector<PlotLabel> labels;
    for (const PlotPlacement& p : plots_in_order(t, o.order)) {
        PlotLabel l{qr_payload(t.spec.code, p.id), human_code(t.spec.code, p.id),
                    {fmt::format("Plot {}  Block {}", p.id, p.block), fmt::format("Trial {}", t.spec.code)}};
        if (o.show_treatment) l.lines.push_back(treatment_label(t, p));
        labels.push_back(std::move(l));
    }
    return labels;
}

void write_pdf_labels(const Store& store, const PrintOptions& o, const LabelOptions& l) {
    const StoredTrial& t = store.trial();
    const auto labels = plot_labels(t, o);
    const PdfInfo info{fmt::format("{} plot labels", t.spec.code), t.created_utc};
    const EccLevel level = ecc_from_string(o.ecc);
    LabelDocument doc;
    nlohmann::json j{{"format", "pdf"}, {"file", o.dir}, {"order", o.order}, {"ecc", o.ecc}};
    if (!l.roll.empty()) {
        const LabelSize size = parse_roll(l.roll);
        doc = render_label_roll_pdf(labels, size, level, info);
        j["roll"] = {{"label_width_mm", size.width_mm}, {"label_height_mm", size.height_mm}};
    } else {
        const SheetGeometry g = sheet_from_options(l);
        doc = render_label_sheets_pdf(labels, g, level, info);
        j["sheet"] = sheet_json(g);
        if (!l.sheet.empty() || !any_grid_option(l)) j["sheet"]["name"] = l.sheet.empty() ? kDefaultSheet : l.sheet;
    }
    write_file(o.dir, doc.pdf);
    j["labels"] = labels.size();
    j["pages"] = doc.pages;
    j["smallest_module_mm"] = std::round(doc.smallest_module_mm * 1000) / 1000;
    if (l.json)
        std::cout << j.dump(2) << "\n";
    else
        std::cout << o.dir << "\n";
    std::cerr << fmt::format("{} labels on {} pages written to {}\n", labels.size(), doc.pages, o.dir);
    if (doc.smallest_module_mm < kSmallModuleMm)
        std::cerr << fmt::format("note: QR modules of {:.2f} mm are below {} mm, the least for field tags; use larger "
                                 "labels or --ecc L/M for a smaller symbol (docs/tags.md)\n",
                                 doc.smallest_module_mm, kSmallModuleMm);
}

void write_thermal_labels(const Store& store, const PrintOptions& o, const LabelOptions& l) {
    const StoredTrial& t = store.trial();
    const LabelSize size = thermal_label_size(l);
    const EccLevel level = ecc_from_string(o.ecc);
    const auto labels = plot_labels(t, o);
    make_folder(o.dir);
    const auto plots = plots_in_order(t, o.order);
    nlohmann::json files = nlohmann::json::array();
    int smallest = 0;
    for (std::size_t i = 0; i < labels.size(); ++i) {
        const ThermalLabel png = render_label_png(labels[i], size, l.dpi, level);
        // Numbered in print order, so that a file listing sorts as the labels are to be printed.
        const std::string file = fmt::format("{}/{}-label-{:04}-{}.png", o.dir, t.spec.code, i + 1, plots[i].id);
        write_file(file, std::string(png.png.begin(), png.png.end()));
        smallest = i == 0 ? png.module_dots : std::min(smallest, png.module_dots);
        files.push_back({{"file", file},
                         {"plot", plots[i].id},
                         {"width_dots", png.width_dots},
                         {"height_dots", png.height_dots},
                         {"module_dots", png.module_dots}});
        if (!l.json) std::cout << file << "\n";
    }
    if (l.json)
        std::cout << nlohmann::json{{"format", "png"}, {"dpi", l.dpi}, {"order", o.order}, {"ecc", o.ecc},
                                    {"label_width_mm", size.width_mm}, {"label_height_mm", size.height_mm},
                                    {"labels", files}}
                         .dump(2)
                  << "\n";
    std::cerr << fmt::format("{} labels for a {} dpi printer written to {}\n", labels.size(), l.dpi, o.dir);
    if (smallest < kSmallModuleDots)
        std::cerr << fmt::format("note: QR modules of {} dots are below {} dots, the least for field tags; use a "
                                 "larger label or --ecc L/M (docs/tags.md)\n",
                                 smallest, kSmallModuleDots);
}
#endif

}  // namespace

std::vector<std::string> write_tags(const Store& store, const TagOptions& o) {
    PrintOptions p;
    static_cast<TagOptions&>(p) = o;
    return write_tag_files(store, p);
}

void add_tags_command(CLI::App& app) {
    auto db = std::make_shared<std::string>();
    auto o = std::make_shared<PrintOptions>();
    auto l = std::make_shared<LabelOptions>();
    auto* cmd = app.add_subcommand(
        "tags", "Write a QR tag for every plot: SVG/PNG files, PDF label sheets or rolls, thermal-printer PNG labels");
    auto* db_opt = cmd->add_option("--db", *db, "Trial database")->check(CLI::ExistingFile);
    auto* out_opt = cmd->add_option("--out", o->dir,
                                    "Folder for the tag files (created if absent); with --format pdf, the PDF file");
    cmd->add_option("--format", o->format,
                    "svg, png or both (one file per plot and an SVG sheet); pdf (label sheets or a roll); png with "
                    "--dpi (thermal labels)")
        ->check(CLI::IsMember({"svg", "png", "both", "pdf"}));
    cmd->add_option("--ecc", o->ecc, "QR error correction: L, M, Q (default) or H")
        ->check(CLI::IsMember({"L", "M", "Q", "H"}));
    cmd->add_option("--module-px", o->module_px, "Symbol PNG (without --dpi): pixels per QR module")
        ->check(CLI::Range(1, 64));
    cmd->add_option("--order", o->order,
                    "walk (walking order, default) or stake (staking order: field row, then column)")
        ->check(CLI::IsMember({"walk", "stake"}));
    cmd->add_flag("--show-treatment", o->show_treatment,
                  "Print each plot's treatment on its tag (refused on a blind trial)");
    auto* sheet_opt = cmd->add_option("--sheet", l->sheet, "Label sheet preset (see --list-sheets); default a4-3x8");
    l->grid = {
        cmd->add_option("--page", l->page, "Sheet paper: a4 or letter")->check(CLI::IsMember({"a4", "letter"})),
        cmd->add_option("--label-width", l->label_width, "Label width, mm"),
        cmd->add_option("--label-height", l->label_height, "Label height, mm"),
        cmd->add_option("--columns", l->columns, "Labels across a sheet"),
        cmd->add_option("--rows", l->rows, "Labels down a sheet"),
        cmd->add_option("--top", l->top, "Top margin: page top edge to the first row's top edge, mm"),
        cmd->add_option("--left", l->left, "Left margin: page left edge to the first column's left edge, mm"),
        cmd->add_option("--gap-x", l->gap_x, "Gap between neighbouring columns, mm"),
        cmd->add_option("--gap-y", l->gap_y, "Gap between neighbouring rows, mm"),
    };
    auto* roll_opt = cmd->add_option("--roll", l->roll, "Label roll: WIDTHxHEIGHT in mm (e.g. 50x25), one label a page");
    roll_opt->excludes(sheet_opt);
    for (CLI::Option* g : l->grid) roll_opt->excludes(g);
    auto* dpi_opt = cmd->add_option("--dpi", l->dpi, "Thermal labels (--format png): printer resolution 203, 300 or 600")
                        ->check(CLI::IsMember({203, 300, 600}));
    cmd->add_flag("--list-sheets", l->list_sheets, "List the label sheet presets and exit");
    cmd->add_flag("--json", l->json, "Print what was written (or --list-sheets) as JSON");

    cmd->callback([=] {
        if (l->list_sheets) {
            list_sheets(l->json);
            return;
        }
        if (!given(db_opt)) throw CLI::RequiredError("--db");
        if (!given(out_opt)) throw CLI::RequiredError("--out");
        const bool label_geometry = given(sheet_opt) || given(roll_opt) || any_grid_option(*l);
        const bool thermal = o->format == "png" && given(dpi_opt);
        if (given(dpi_opt) && o->format != "png")
            throw CLI::ValidationError("--dpi", "thermal labels are --format png --dpi N; PDF is resolution-free");
        if (label_geometry && o->format != "pdf" && !thermal)
            throw CLI::ValidationError("--sheet/--roll/grid options",
                                       "label geometry applies to --format pdf, and to --format png with --dpi");
        if (thermal && !label_geometry)
            throw CLI::ValidationError("--dpi", "thermal labels need a label size: --roll WxH, --sheet NAME or "
                                                "--label-width and --label-height");

        Store store = Store::open(*db);
        check_treatment_allowed(store.trial(), o->show_treatment);
        if (o->format == "pdf" || thermal) {
#ifdef PW_HAVE_LABELS
            if (thermal)
                write_thermal_labels(store, *o, *l);
            else
                write_pdf_labels(store, *o, *l);
            return;
#else
            throw Error("this plotwright was built without cairo: PDF and thermal labels are not available; use "
                        "--format svg or png");
#endif
        }
        auto files = write_tag_files(store, *o);
        if (l->json)
            std::cout << nlohmann::json{{"format", o->format}, {"order", o->order}, {"ecc", o->ecc},
                                        {"files", files}}
                             .dump(2)
                      << "\n";
        else
            for (const auto& f : files) std::cout << f << "\n";
        std::cerr << fmt::format("{} files written to {}\n", files.size(), o->dir);
    });
}

}  // namespace pw::app
