// `plotwright design` (spec -> randomized layout -> new trial database) and `plotwright plots`.
#include <CLI/CLI.hpp>
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <algorithm>
#include <iostream>

#include "core/design/layout.hpp"
#include "core/spec/trial_spec.hpp"
#include "firmware_app/app.hpp"
#include "storage/store.hpp"

namespace pw::app {
namespace {

struct DesignOptions {
    std::string spec_path;
    std::string db;
    std::optional<std::uint64_t> seed;
    bool json = false;
};

void run_design(const DesignOptions& o) {
    std::string text = read_text_file(o.spec_path);
    TrialSpec spec = parse_trial_spec(text, o.spec_path);
    std::uint64_t seed = o.seed ? *o.seed : spec.seed ? *spec.seed : seed_from_os();
    Layout layout = design_trial(spec, seed);
    Store store = Store::create(o.db, text, o.spec_path, spec, layout, now_utc_iso());
    for (const auto& note : layout.notes) std::cerr << "note: " << note << "\n";
    if (o.json) {
        nlohmann::json j{{"trial", spec.code},         {"design", spec.design},
                         {"seed", std::to_string(seed)}, {"algorithm", layout.algorithm},
                         {"blocks", spec.blocks},        {"treatments", spec.treatments.size()},
                         {"plots", layout.plots.size()}, {"db", o.db},
                         {"field_x_m", layout.field_x_m}, {"field_y_m", layout.field_y_m}};
        std::cout << j.dump(2) << "\n";
        return;
    }
    int blocks = 0;
    for (const auto& p : layout.plots) blocks = std::max(blocks, p.block);
    std::cout << fmt::format(
        "trial {} ({}): {} design, {} treatments in {} blocks = {} plots{}\n"
        "seed {} ({}{})\nfield {:.1f} m along x (bearing {}) x {:.1f} m along y from the reference stake\n"
        "written {}\n",
        spec.code, spec.title, spec.design, spec.treatments.size(), blocks, layout.plots.size(),
        layout.guards.empty() ? "" : fmt::format(" and {} guard plots", layout.guards.size()), seed,
        layout.algorithm, o.seed ? ", from --seed" : spec.seed ? ", from the spec" : ", drawn now and stored",
        layout.field_x_m, spec.field.x_bearing_deg, layout.field_y_m, o.db);
}

struct PlotsOptions {
    std::string db;
    std::string format = "csv";
    std::string out;
};

std::string plots_table(const Store& store) {
    const auto& t = store.trial();
    std::string s = fmt::format("{:>6} {:>5} {:>4} {:>4} {:>8} {:>8}  {}\n", "plot", "block", "row", "col", "x_m",
                                "y_m", "treatment");
    for (const auto& p : t.layout.plots)
        s += fmt::format("{:>6} {:>5} {:>4} {:>4} {:>8.2f} {:>8.2f}  {}\n", p.id, p.block, p.row, p.col, p.x_m,
                         p.y_m, t.spec.treatments.at(static_cast<std::size_t>(p.treatment)).label);
    return s;
}

}  // namespace

void add_design_commands(CLI::App& app) {
    auto d = std::make_shared<DesignOptions>();
    auto* design = app.add_subcommand("design", "Randomize a trial spec, lay it out and create its database");
    design->add_option("spec", d->spec_path, "Trial specification (TOML, see docs/spec.md)")
        ->required()
        ->check(CLI::ExistingFile);
    design->add_option("--db", d->db, "Trial database to create (must not exist)")->required();
    design->add_option("--seed", d->seed, "Randomization seed (overrides the spec's; default: spec, else drawn)");
    design->add_flag("--json", d->json, "Print the summary as JSON");
    design->callback([d] { run_design(*d); });

    auto p = std::make_shared<PlotsOptions>();
    auto* plots = app.add_subcommand("plots", "List the laid-out plots in walking order");
    plots->add_option("--db", p->db, "Trial database")->required()->check(CLI::ExistingFile);
    plots->add_option("--format", p->format, "csv (RFC 4180) or table")
        ->check(CLI::IsMember({"csv", "table"}));
    plots->add_option("--out", p->out, "Write to this file instead of stdout");
    plots->callback([p] {
        Store store = Store::open(p->db);
        emit(p->out, p->format == "csv" ? export_plots_csv(store) : plots_table(store));
    });
}

}  // namespace pw::app
