// `plotwright demo`: one complete, invented field day through the real commands' code.
//
// design (layouts/demo.toml) -> tags -> a simulated technician types into the line recorder (the same
// run_line_recorder a person uses, including mistakes the recorder must refuse) -> CSV exports -> analysis
// -> the trial report (report.html).
// The recorded values are INVENTED: drawn from a seeded model (treatment effects, a gradient across the
// blocks, plot noise) so that the demo is the same on every run and every machine.
#include <CLI/CLI.hpp>
#include <fmt/format.h>

#include <chrono>
#include <cmath>
#include <filesystem>
#include <iostream>
#include <sstream>

#include "core/design/layout.hpp"
#include "core/error.hpp"
#include "core/random/engine.hpp"
#include "core/spec/trial_spec.hpp"
#include "core/tags/payload.hpp"
#include "firmware_app/app.hpp"
#include "firmware_app/report_command.hpp"
#include "storage/store.hpp"

namespace pw::app {
namespace {

constexpr std::uint64_t kSimulationSeed = 20260915;

// A clock that advances a fixed step per reading, from an invented field-day morning.
struct FieldDayClock {
    std::chrono::sys_seconds t = std::chrono::sys_days{std::chrono::year{2026} / 9 / 15} + std::chrono::hours{7} +
                                 std::chrono::minutes{30};
    std::string operator()() {
        t += std::chrono::seconds{25};
        auto day = std::chrono::floor<std::chrono::days>(t);
        std::chrono::year_month_day ymd{day};
        std::chrono::hh_mm_ss hms{t - day};
        return fmt::format("{:04}-{:02}-{:02}T{:02}:{:02}:{:02}Z", int(ymd.year()), unsigned(ymd.month()),
                           unsigned(ymd.day()), hms.hours().count(), hms.minutes().count(),
                           hms.seconds().count());
    }
};

// Standard normal draw (Box-Muller) from the portable engine.
double normal(Rng& rng) {
    auto u = [&] { return (static_cast<double>(rng.next() >> 11) + 0.5) * 0x1.0p-53; };
    double u1 = u(), u2 = u();
    return std::sqrt(-2.0 * std::log(u1)) * std::cos(2.0 * M_PI * u2);
}

// The invented model: each treatment shifts every numeric trait by a fixed fraction of the trait's range,
// each block further up the gradient adds a little, and every plot has its own noise.
class Simulator {
public:
    explicit Simulator(const TrialSpec& spec) : rng_(kSimulationSeed) {
        for (std::size_t i = 0; i < spec.treatments.size(); ++i) effect_.push_back(0.07 * normal(rng_));
    }

    std::string value(const TraitSpec& t, const PlotPlacement& p) {
        double lo = t.min.value_or(0), hi = t.max.value_or(lo + 100);
        double frac = 0.5 + effect_[static_cast<std::size_t>(p.treatment)] + 0.025 * (p.block - 1) +
                      0.035 * normal(rng_);
        frac = std::clamp(frac, 0.05, 0.95);
        double v = lo + frac * (hi - lo);
        switch (t.kind) {
            case TraitKind::Number: return fmt::format("{:.{}f}", v, t.decimals);
            case TraitKind::Count:
            case TraitKind::Score: return fmt::format("{}", static_cast<long>(std::lround(v)));
            case TraitKind::Date: {
                // Flowering date: later for a later treatment, a few days' spread.
                auto d = std::chrono::sys_days{std::chrono::year{2026} / 7 / 20} +
                         std::chrono::days{static_cast<int>(std::lround(20 * frac))};
                std::chrono::year_month_day ymd{d};
                return fmt::format("{:04}-{:02}-{:02}", int(ymd.year()), unsigned(ymd.month()), unsigned(ymd.day()));
            }
            case TraitKind::Text: return "";
        }
        return "";
    }

private:
    Rng rng_;
    std::vector<double> effect_;
};

// The technician's keystrokes for the whole trial, in walking order, with the day's usual accidents.
std::string field_day_script(const TrialSpec& spec, const Layout& layout) {
    Simulator sim(spec);
    std::ostringstream s;
    const auto& plots = layout.plots;
    auto first_number = std::find_if(spec.traits.begin(), spec.traits.end(),
                                     [](const TraitSpec& t) { return t.kind == TraitKind::Number; });
    // A tag from last season's trial in the technician's pocket: refused, nothing written.
    s << qr_payload("OLD25", plots.front().id) << "\n";
    for (std::size_t i = 0; i < plots.size(); ++i) {
        const PlotPlacement& p = plots[i];
        // Plot 3 of block 2 was lost to a washout: flagged missing, nothing measured.
        if (p.block == 2 && p.position == 3) {
            s << qr_payload(spec.code, p.id) << "\n/flag missing washout from the ditch after the storm\n";
            continue;
        }
        // One tag is too muddy to scan: its code is typed by hand, in lower case.
        if (i == 5) {
            std::string code = human_code(spec.code, p.id);
            std::transform(code.begin(), code.end(), code.begin(), [](unsigned char c) { return std::tolower(c); });
            s << code << "\n";
        } else {
            s << qr_payload(spec.code, p.id) << "\n";
        }
        if (p.block == 3 && p.position == 2) s << "/flag damaged hail on the panicles\n";
        for (const auto& t : spec.traits) {
            std::string v = sim.value(t, p);
            if (t.kind == TraitKind::Text) v = (p.block == 3 && p.position == 2) ? "hail damage, about 20% of heads" : "";
            // A slip of the finger: ten times too much, refused by the trait's range, then typed again.
            if (i == 2 && &t == &*first_number && t.max) s << fmt::format("{:.{}f}\n", *t.max * 10, t.decimals);
            s << v << "\n";
            // Noticed a transposed digit just after confirming it: corrected, the original kept.
            if (i == 7 && &t == &*first_number) s << "/fix transposed digits\n" << sim.value(t, p) << "\n";
        }
    }
    s << "/quit\n";
    return s.str();
}

void remove_previous(const std::string& dir, const std::vector<std::string>& names) {
    std::error_code ec;
    for (const auto& n : names) std::filesystem::remove_all(std::filesystem::path(dir) / n, ec);
}

void run_demo(const std::string& spec_path, const std::string& out_dir) {
    namespace fs = std::filesystem;
    std::error_code ec;
    fs::create_directories(out_dir, ec);
    if (ec) throw Error(fmt::format("{}: cannot create the folder: {}", out_dir, ec.message()));
    const std::string db = (fs::path(out_dir) / "demo-trial.db").string();
    remove_previous(out_dir, {"demo-trial.db", "demo-trial.db-wal", "demo-trial.db-shm", "tags", "plots.csv",
                              "observations.csv", "field-day.txt", "analysis.txt", "report.html"});
    std::vector<std::string> written;

    std::cout << "plotwright demo: an invented field day (every value below is invented)\n\n";
    std::string text = read_text_file(spec_path);
    TrialSpec spec = parse_trial_spec(text, spec_path);
    std::uint64_t seed = spec.seed ? *spec.seed : seed_from_os();
    Layout layout = design_trial(spec, seed);
    {
        Store store = Store::create(db, text, spec_path, spec, layout, now_utc_iso());
        written.push_back(db);
        std::cout << fmt::format("1. design   {}: {} treatments x {} blocks = {} plots, seed {}, blocks across "
                                 "the gradient ({})\n",
                                 spec.code, spec.treatments.size(), spec.blocks, layout.plots.size(), seed,
                                 spec.gradient.label);
        write_file((fs::path(out_dir) / "plots.csv").string(), export_plots_csv(store));
        written.push_back((fs::path(out_dir) / "plots.csv").string());

        auto tags = write_tags(store, TagOptions{(fs::path(out_dir) / "tags").string(), "both", "Q", 8});
        std::cout << fmt::format("2. tags     {} files (QR level Q, SVG + PNG, one sheet) in {}/tags\n",
                                 tags.size(), out_dir);
        written.push_back((fs::path(out_dir) / "tags").string() + "/");

        std::cout << "3. field day: a technician scans and records every plot (simulated keystrokes)\n"
                     "   Safety, as on any field day (common practice): keep clear of moving plot machinery,\n"
                     "   take water, shade and rest in heat, and never enter treated plots before the label's\n"
                     "   re-entry interval; local regulations and licensed staff decide.\n";
        std::istringstream keys(field_day_script(spec, layout));
        std::ostringstream field_day;  // messages and refusals interleaved, as the technician saw them
        FieldDayClock clock;
        int refused = run_line_recorder(store, keys, field_day, field_day,
                                        RecorderSetup{"demo-handheld-1", "demo technician", std::ref(clock), false,
                                                      true});
        write_file((fs::path(out_dir) / "field-day.txt").string(), field_day.str());
        written.push_back((fs::path(out_dir) / "field-day.txt").string());
        std::cout << fmt::format("   {} values stored, {} lines refused by the recorder (field-day.txt has every "
                                 "keystroke and answer):\n",
                                 store.observation_count(), refused);
        std::istringstream rl(field_day.str());
        for (std::string l; std::getline(rl, l);)
            if (l.rfind("refused:", 0) == 0) std::cout << "     " << l << "\n";

        write_file((fs::path(out_dir) / "observations.csv").string(), export_observations_csv(store));
        written.push_back((fs::path(out_dir) / "observations.csv").string());
        std::cout << "4. export   observations.csv (one current value per row) and plots.csv\n";
    }

    // The analysis shown is the spec's first yield (computed from weight and moisture), else its first number.
    std::string analysed;
    for (const auto& t : spec.traits)
        if (analysed.empty() && t.kind == TraitKind::Number) analysed = t.name;
    if (!spec.yields.empty()) analysed = spec.yields.front().name;
    if (!analysed.empty()) {
        std::cout << fmt::format("5. analysis of {} (plotwright analyze --db {} --trait {}):\n\n", analysed, db,
                                 analysed);
        Store store = Store::open(db);
        std::string report = analyze_trait(store, analysed, false);
        std::string analysis_file = (fs::path(out_dir) / "analysis.txt").string();
        write_file(analysis_file, report);
        std::cout << report << "\n";
        written.push_back(analysis_file);
    }
    {
        // The station manager's trial report: every numeric trait's maps, means, ANOVA and checks in one page.
        Store store = Store::open(db);
        const std::string report_file = (fs::path(out_dir) / "report.html").string();
        write_file(report_file, trial_report_html(store, false, now_utc_iso()));
        std::cout << fmt::format("6. report   report.html: maps, means, ANOVA and data checks of every numeric trait "
                                 "(plotwright report --db {} --out report.html)\n\n",
                                 db);
        written.push_back(report_file);
    }
    std::cout << "files written:\n";
    for (const auto& f : written) std::cout << "  " << f << "\n";
}

}  // namespace

void add_demo_command(CLI::App& app) {
    auto spec = std::make_shared<std::string>(default_layouts_dir() + "/demo.toml");
    auto out = std::make_shared<std::string>("demo-out");
    auto* cmd = app.add_subcommand("demo", "Run an invented field day end to end: design, tags, recording, "
                                           "export, analysis, report");
    cmd->add_option("--spec", *spec, "Trial specification to use")->check(CLI::ExistingFile);
    cmd->add_option("--out", *out, "Folder for everything the demo writes");
    cmd->callback([spec, out] { run_demo(*spec, *out); });
}

}  // namespace pw::app
