// `plotwright report`: the trial report, one self-contained HTML file (docs/report.md). Reads the trial,
// its current values and flags from the database, analyses each numeric trait as `analyze` does
// (trait_analysis.hpp), and hands everything to the pure composition of report_html.hpp. A trait that
// cannot be analysed is reported as such; the rest of the report is still written.
#include <CLI/CLI.hpp>
#include <fmt/format.h>

#include "core/error.hpp"
#include "firmware_app/app.hpp"
#include "firmware_app/report_command.hpp"
#include "firmware_app/report_html.hpp"
#include "firmware_app/trait_analysis.hpp"
#include "storage/certificate.hpp"
#include "storage/store.hpp"
#include "storage/sync_conflicts.hpp"
#include "storage/trait_values.hpp"
#include "core/traits/yield.hpp"

namespace pw::app {
namespace {

struct ReportOptions {
    std::string db;
    std::string out;
    bool blind = false;
};

}  // namespace

std::string trial_report_html(const Store& store, bool blind, const std::string& now_utc) {
    const StoredTrial& t = store.trial();
    report::ReportInput in;
    in.spec = t.spec;
    in.layout = t.layout;
    in.created_utc = t.created_utc;
    if (auto cert = stored_certificate(store)) in.certificate_sha256 = cert->sha256;
    // The values the analysis uses: one per plot and trait, sync conflicts left out and listed.
    const ResolvedObservations resolved = resolved_observations(store);
    for (const ObservationRow& row : resolved.rows) in.observations.push_back(row.record);
    in.events = store.plot_events();
    for (const Conflict& c : resolved.conflicts) {
        report::UnresolvedConflict u{c.plot, c.trait, {}};
        for (const ConflictValue& v : c.values) u.values.push_back(v.record);
        in.conflicts.push_back(std::move(u));
    }
    in.generated_utc = now_utc;
    in.program = "plotwright " PW_APP_VERSION;
    in.blind = blind;
    std::vector<std::string> names;
    for (const TraitSpec& trait : t.spec.traits)
        if (trait.kind != TraitKind::Date && trait.kind != TraitKind::Text) names.push_back(trait.name);
    for (const YieldSpec& y : t.spec.yields) names.push_back(y.name);
    for (const std::string& name : names) {
        report::TraitSection s;
        TraitValues values = trait_values(t, resolved, name);
        s.trait = values.trait;
        try {
            TraitAnalysis a = analyze_trait_result(store, values);
            s.analysis = std::move(a.result);
            s.missing_why = std::move(a.missing_why);
            s.notes = std::move(a.notes);
        } catch (const InputError& e) {
            s.not_analysed = e.what();  // e.g. a treatment without any value yet, no residual df left
        }
        if (values.yield) {
            s.computed_how = describe_yield(*values.yield);
            for (auto& [plot, rec] : values.values) s.computed.push_back(std::move(rec));
        }
        in.traits.push_back(std::move(s));
    }
    return report::compose_report_html(in);
}

void add_report_command(CLI::App& app) {
    auto o = std::make_shared<ReportOptions>();
    auto* cmd = app.add_subcommand("report", "Write the trial report: one self-contained HTML file with the facts, "
                                             "field maps, means, ANOVA and data-quality checks of every numeric trait");
    cmd->add_option("--db", o->db, "Trial database")->required()->check(CLI::ExistingFile);
    cmd->add_option("--out", o->out, "HTML file to write (default: stdout)");
    cmd->add_flag("--blind", o->blind, "Show treatments as T1..Tn only (a copy for scorers; docs/report.md)");
    cmd->callback([o] { emit(o->out, trial_report_html(Store::open(o->db), o->blind, now_utc_iso())); });
}

}  // namespace pw::app
