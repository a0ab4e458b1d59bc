// `plotwright verify`: is the stored layout the one the stored seed gives? Re-derives the layout, compares
// plot by plot and checks the stored digest (core/design/certificate.hpp; outcomes and exit codes in
// docs/certificate.md). `--canonical` prints the canonical text of the stored plots for an outside SHA-256 tool.
#include <CLI/CLI.hpp>
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <iostream>

#include "core/design/certificate.hpp"
#include "core/error.hpp"
#include "firmware_app/app.hpp"
#include "storage/certificate.hpp"
#include "storage/store.hpp"

namespace pw::app {
namespace {

struct VerifyOptions {
    std::string db;
    bool json = false;
    bool canonical = false;
};

// The design columns the canonical text uses: those this program's design engine gives the spec (the stored
// layout keeps the values, the engine the list); the stored layout's own list when the spec cannot be designed.
std::vector<std::string> design_columns(const StoredTrial& t) {
    try {
        return design_trial(t.spec, t.layout.seed).columns;
    } catch (const DesignError&) {
        return t.layout.columns;
    }
}

void run_verify(const VerifyOptions& o) {
    Store store = Store::open(o.db);
    const StoredTrial& t = store.trial();
    if (o.canonical) {
        std::cout << certificate_text(t.spec, t.layout, design_columns(t));
        return;
    }
    const std::optional<StoredCertificate> cert = stored_certificate(store);
    if (cert && cert->format != kCertificateFormat) {
        const std::string msg = fmt::format(
            "{}: the stored digest is of certificate format '{}', this program computes '{}'; verify it with a "
            "plotwright that knows that format",
            o.db, cert->format, kCertificateFormat);
        if (o.json)
            std::cout << nlohmann::json{{"db", o.db}, {"outcome", "format-differs"}, {"ok", false}, {"message", msg}}.dump(2)
                      << "\n";
        else
            std::cerr << "plotwright: verify: " << msg << "\n";
        throw ExitStatus{1};
    }
    const VerifyReport r =
        verify_layout(t.spec, t.layout, cert ? std::optional<std::string>(cert->sha256) : std::nullopt);
    if (o.json) {
        nlohmann::json diffs = nlohmann::json::array();
        for (const auto& d : r.differences) diffs.push_back({{"plot", d.plot}, {"what", d.what}});
        nlohmann::json j{{"db", o.db},
                         {"outcome", verify_outcome_name(r.outcome)},
                         {"ok", r.ok()},
                         {"message", r.message},
                         {"trial", t.spec.code},
                         {"design", t.spec.design},
                         {"seed", std::to_string(t.layout.seed)},
                         {"stored_algorithm", r.stored_algorithm},
                         {"program_algorithm", r.program_algorithm},
                         {"certificate_format", cert ? cert->format : ""},
                         {"stored_digest", r.stored_digest},
                         {"digest_of_stored", r.digest_of_stored},
                         {"digest_of_derived", r.digest_of_derived},
                         {"differences", diffs}};
        std::cout << j.dump(2) << "\n";
    } else {
        std::ostream& out = r.ok() ? std::cout : std::cerr;
        out << (r.ok() ? "" : "plotwright: verify: ") << o.db << ": " << r.message << "\n";
        for (const auto& d : r.differences) out << fmt::format("  plot {}: {}\n", d.plot, d.what);
    }
    if (!r.ok()) throw ExitStatus{1};
}

}  // namespace

void add_verify_command(CLI::App& app) {
    auto o = std::make_shared<VerifyOptions>();
    auto* verify = app.add_subcommand(
        "verify", "Check that the stored layout is the one the stored seed gives, and that its digest matches");
    verify->add_option("--db", o->db, "Trial database")->required()->check(CLI::ExistingFile);
    verify->add_flag("--json", o->json, "Print the result as JSON");
    verify->add_flag("--canonical", o->canonical,
                     "Print the canonical text of the stored layout (docs/certificate.md) instead, e.g. for sha256sum");
    verify->callback([o] { run_verify(*o); });
}

}  // namespace pw::app
