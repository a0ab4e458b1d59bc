// `plotwright stakeout`: every plot corner with its tape distances from the reference stake and, when the
// spec places the stake on the Earth, its WGS 84 position (core/field/stakeout.hpp, core/field/geodesy.hpp);
// with --nmea, the handheld screen that walks the corners with a GNSS receiver (stakeout_tui.cpp), or one
// line per good fix when there is no terminal.
#include <CLI/CLI.hpp>
#include <fmt/format.h>
#include <nlohmann/json.hpp>
#include <unistd.h>

#include <fstream>
#include <iostream>

#include "core/error.hpp"
#include "core/field/geodesy.hpp"
#include "core/field/stakeout.hpp"
#include "firmware_app/app.hpp"
#include "firmware_app/stakeout_tui.hpp"
#include "firmware_app/stakeout_view.hpp"
#include "storage/csv_table.hpp"
#include "storage/store.hpp"

namespace pw::app {
namespace {

struct StakeoutOptions {
    std::string db;
    std::string format = "csv";
    std::string out;
    std::string nmea;
    double rate = 0;
    int from_plot = 0;
};

std::optional<FieldGeoreference> georeference(const TrialSpec& spec) {
    if (!spec.field.origin.lat_deg || !spec.field.origin.lon_deg) return std::nullopt;
    return FieldGeoreference(LatLon{*spec.field.origin.lat_deg, *spec.field.origin.lon_deg}, spec.field.x_bearing_deg);
}

std::string corner_table(const StoredTrial& t, const std::string& format) {
    const std::vector<PlotCorner> corners = plot_corners(t.layout, t.spec.field.x_bearing_deg);
    const std::optional<FieldGeoreference> geo = georeference(t.spec);
    std::vector<std::optional<LatLon>> where;
    for (const PlotCorner& c : corners) where.push_back(geo ? std::optional(geo->to_wgs84(c.x_m, c.y_m)) : std::nullopt);

    if (format == "json") {
        nlohmann::json rows = nlohmann::json::array();
        for (std::size_t i = 0; i < corners.size(); ++i) {
            const PlotCorner& c = corners[i];
            nlohmann::json r = {{"order", i + 1}, {"plot", c.plot}, {"corner", c.corner}, {"label", c.label},
                                {"x_m", c.x_m}, {"y_m", c.y_m}, {"diagonal_m", c.diagonal_m}};
            if (where[i]) {
                r["lat_deg"] = where[i]->lat_deg;
                r["lon_deg"] = where[i]->lon_deg;
            }
            rows.push_back(r);
        }
        return nlohmann::json{{"trial", t.spec.code}, {"x_bearing_deg", t.spec.field.x_bearing_deg},
                              {"stake", t.spec.field.origin.description}, {"corners", rows}}
                   .dump(1) + "\n";
    }
    if (format == "csv") {
        std::vector<std::string> header = {"order", "plot", "corner", "label", "x_m", "y_m", "diagonal_m"};
        if (geo) header.insert(header.end(), {"lat_deg", "lon_deg"});
        std::string out = csv_record(header);
        for (std::size_t i = 0; i < corners.size(); ++i) {
            const PlotCorner& c = corners[i];
            std::vector<std::string> row = {std::to_string(i + 1), std::to_string(c.plot), std::to_string(c.corner),
                                            c.label, fmt::format("{:.3f}", c.x_m), fmt::format("{:.3f}", c.y_m),
                                            fmt::format("{:.3f}", c.diagonal_m)};
            if (where[i]) row.insert(row.end(), {fmt::format("{:.9f}", where[i]->lat_deg), fmt::format("{:.9f}", where[i]->lon_deg)});
            out += csv_record(row);
        }
        return out;
    }
    // txt: for printing and taking to the field.
    std::string out = fmt::format("Stake-out of trial {} ({})\n", t.spec.code, t.spec.title);
    out += fmt::format("Reference stake: {}\n", t.spec.field.origin.description.empty() ? "(no description in the spec)"
                                                                                        : t.spec.field.origin.description);
    out += fmt::format("x: along the base line, bearing {:g} deg from the stake; y: at right angles, to the left.\n",
                       t.spec.field.x_bearing_deg);
    out += "diagonal: straight from the stake, a check with a third tape.\n";
    if (geo)
        out += fmt::format("Stake at {:.8f} {:.8f} (WGS 84); corners through the tangent plane at the stake.\n",
                           geo->stake().lat_deg, geo->stake().lon_deg);
    out += "\n";
    out += fmt::format("{:>5} {:>6} {:>2} {:<3} {:>9} {:>9} {:>9}", "order", "plot", "c", "", "x_m", "y_m", "diag_m");
    if (geo) out += fmt::format(" {:>14} {:>14}", "lat_deg", "lon_deg");
    out += "\n";
    for (std::size_t i = 0; i < corners.size(); ++i) {
        const PlotCorner& c = corners[i];
        out += fmt::format("{:>5} {:>6} {:>2} {:<3} {:>9.3f} {:>9.3f} {:>9.3f}", i + 1, c.plot, c.corner, c.label, c.x_m,
                           c.y_m, c.diagonal_m);
        if (where[i]) out += fmt::format(" {:>14.9f} {:>14.9f}", where[i]->lat_deg, where[i]->lon_deg);
        out += "\n";
    }
    return out;
}

void run_with_nmea(const StoredTrial& t, const StakeoutOptions& o, const std::string& db) {
    const std::optional<FieldGeoreference> geo = georeference(t.spec);
    if (!geo)
        throw SpecError(t.spec_source.empty() ? db : t.spec_source, "field.origin",
                        "the spec gives no WGS 84 position of the reference stake (lat_deg, lon_deg); stake-out with "
                        "GNSS needs it (the tape distances work without it: leave out --nmea)");
    StakeoutState s;
    s.trial_code = t.spec.code;
    s.corners = plot_corners(t.layout, t.spec.field.x_bearing_deg);
    for (const PlotCorner& c : s.corners) s.corner_positions.push_back(geo->to_wgs84(c.x_m, c.y_m));
    if (o.from_plot != 0) {
        std::size_t i = 0;
        while (i < s.corners.size() && s.corners[i].plot != o.from_plot) ++i;
        if (i == s.corners.size()) throw InputError(fmt::format("--from: trial {} has no plot {}", t.spec.code, o.from_plot));
        s.index = i;
    }
    if (::isatty(0) && ::isatty(1)) {
        run_stakeout_screen(s, o.nmea, o.rate);
        return;
    }
    // No terminal: one line per good fix on stdout, refusals on stderr, a count at the end.
    std::ifstream in(o.nmea, std::ios::binary);
    if (!in) throw InputError(fmt::format("{}: cannot open the NMEA source", o.nmea));
    std::string line;
    long number = 0;
    while (std::getline(in, line)) {
        ++number;
        const NmeaResult r = s.feed(line);
        if (r.outcome == NmeaOutcome::Rejected)
            std::cerr << fmt::format("{}:{}: refused: {}\n", o.nmea, number, r.reason);
        else if (r.outcome == NmeaOutcome::Accepted && r.fix->valid)
            std::cout << describe_fix_line(s) << "\n" << std::flush;
        if (o.rate > 0) ::usleep(static_cast<useconds_t>(1e6 / o.rate));
    }
    std::cerr << fmt::format("{}: {} lines: {} accepted, {} ignored, {} refused\n", o.nmea, number, s.counts.accepted,
                             s.counts.ignored, s.counts.rejected);
}

}  // namespace

void add_stakeout_command(CLI::App& app) {
    auto o = std::make_shared<StakeoutOptions>();
    auto* cmd = app.add_subcommand(
        "stakeout", "Plot corners with tape distances from the reference stake (and WGS 84 when the spec gives the "
                    "stake's position); with --nmea, walk them with a GNSS receiver");
    cmd->add_option("--db", o->db, "Trial database")->required()->check(CLI::ExistingFile);
    cmd->add_option("--format", o->format, "csv (RFC 4180), txt (to print) or json")
        ->check(CLI::IsMember({"csv", "txt", "json"}));
    cmd->add_option("--out", o->out, "Write to this file instead of stdout");
    cmd->add_option("--nmea", o->nmea,
                    "NMEA 0183 source (serial device or file): the stake-out screen, or one line per good fix "
                    "without a terminal");
    cmd->add_option("--nmea-rate", o->rate, "Read at most this many NMEA lines per second (0: as they come)")
        ->check(CLI::NonNegativeNumber);
    cmd->add_option("--from", o->from_plot, "Start at this plot's first corner (with --nmea)");
    cmd->callback([o] {
        Store store = Store::open(o->db);
        const StoredTrial& t = store.trial();
        if (!o->nmea.empty()) {
            run_with_nmea(t, *o, o->db);
            return;
        }
        emit(o->out, corner_table(t, o->format));
    });
}

}  // namespace pw::app
