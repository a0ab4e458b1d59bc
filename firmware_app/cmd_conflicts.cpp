// `plotwright conflicts`: the plot/traits whose values in force disagree after sync, with who recorded
// what and when (storage/sync_conflicts.hpp, docs/station.md). Exit 0 whether or not there are conflicts.
#include <CLI/CLI.hpp>
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <iostream>

#include "firmware_app/app.hpp"
#include "storage/store.hpp"
#include "storage/sync_conflicts.hpp"

namespace pw::app {

void add_conflicts_command(CLI::App& app) {
    struct Options {
        std::string db;
        bool json = false;
    };
    auto o = std::make_shared<Options>();
    auto* cmd = app.add_subcommand("conflicts", "List the plot/traits where devices recorded different values");
    cmd->add_option("--db", o->db, "Station database")->required()->check(CLI::ExistingFile);
    cmd->add_flag("--json", o->json, "Print the conflicts as JSON");
    cmd->callback([o] {
        Store store = Store::open(o->db);
        const auto conflicts = unresolved_conflicts(store);
        if (o->json) {
            nlohmann::json list = nlohmann::json::array();
            for (const auto& c : conflicts) {
                nlohmann::json values = nlohmann::json::array();
                for (const auto& v : c.values)
                    values.push_back({{"observation", v.record.id},
                                      {"value", v.record.obs.value},
                                      {"recorded_utc", v.record.obs.recorded_utc},
                                      {"device", v.record.obs.device},
                                      {"observer", v.record.obs.observer},
                                      {"origin", v.origin},
                                      {"origin_id", v.origin_id}});
                list.push_back({{"plot", c.plot}, {"trait", c.trait}, {"values", values}});
            }
            std::cout << nlohmann::json{{"trial", store.trial().spec.code}, {"unresolved", conflicts.size()},
                                        {"conflicts", list}}
                             .dump(2)
                      << "\n";
            return;
        }
        if (conflicts.empty()) {
            std::cout << fmt::format("trial {}: no conflicts\n", store.trial().spec.code);
            return;
        }
        std::cout << fmt::format("trial {}: {} plot/trait(s) in conflict\n", store.trial().spec.code, conflicts.size());
        for (const auto& c : conflicts) {
            std::cout << fmt::format("plot {} {}:\n", c.plot, c.trait);
            for (const auto& v : c.values)
                std::cout << fmt::format("  observation {}: {} recorded {} by {} on {} ({} #{})\n", v.record.id,
                                         v.record.obs.value, v.record.obs.recorded_utc, v.record.obs.observer,
                                         v.record.obs.device, v.origin, v.origin_id);
        }
        std::cout << "resolve each with: plotwright resolve --db DB --plot N --trait T (--value V | --keep ID) --reason TEXT\n";
    });
}

}  // namespace pw::app
