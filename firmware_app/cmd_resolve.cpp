// `plotwright resolve`: settles one conflict with a new observation that supersedes every conflicting value,
// carrying the chosen value and the reason (storage/sync_conflicts.hpp, docs/station.md).
#include <CLI/CLI.hpp>
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <iostream>

#include "firmware_app/app.hpp"
#include "storage/store.hpp"
#include "storage/sync_conflicts.hpp"

namespace pw::app {

void add_resolve_command(CLI::App& app) {
    struct Options {
        std::string db, trait, value, reason, observer = "station manager";
        int plot = 0;
        std::int64_t keep = 0;
        bool json = false;
    };
    auto o = std::make_shared<Options>();
    auto* cmd = app.add_subcommand("resolve", "Resolve a conflict: record the chosen value and why, superseding the "
                                              "conflicting ones");
    cmd->add_option("--db", o->db, "Station database")->required()->check(CLI::ExistingFile);
    cmd->add_option("--plot", o->plot, "Plot number")->required();
    cmd->add_option("--trait", o->trait, "Trait name")->required();
    auto* value = cmd->add_option("--value", o->value, "The value chosen (checked against the trait)");
    auto* keep = cmd->add_option("--keep", o->keep, "Keep the value of this observation (an id `conflicts` lists)");
    value->excludes(keep);
    cmd->add_option("--reason", o->reason, "Why this value (stored with it)")->required();
    cmd->add_option("--observer", o->observer, "Who decides (default: station manager)");
    cmd->add_flag("--json", o->json, "Print the result as JSON");
    cmd->callback([o, value, keep] {
        if (value->count() == 0 && keep->count() == 0)
            throw CLI::RequiredError("--value or --keep");
        Store store = Store::open(o->db);
        Resolution r;
        r.plot = o->plot;
        r.trait = o->trait;
        if (value->count()) r.value = o->value;
        if (keep->count()) r.keep = o->keep;
        r.reason = o->reason;
        r.observer = o->observer;
        r.now_utc = now_utc_iso();
        const std::int64_t id = resolve_conflict(store, r);
        if (o->json) {
            std::cout << nlohmann::json{{"plot", r.plot}, {"trait", r.trait}, {"observation", id},
                                        {"unresolved", unresolved_conflicts(store).size()}}
                             .dump(2)
                      << "\n";
            return;
        }
        std::cout << fmt::format("plot {} {}: resolved by observation {}; {} conflict(s) left\n", r.plot, r.trait, id,
                                 unresolved_conflicts(store).size());
    });
}

}  // namespace pw::app
