// `plotwright audit`: verifies the hash chain of the audit log (storage/audit_log.hpp, docs/station.md) and
// lists its entries. Exit 1 with the first broken link when the log was edited behind plotwright's back.
#include <CLI/CLI.hpp>
#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include <iostream>

#include "firmware_app/app.hpp"
#include "storage/audit_log.hpp"
#include "storage/store.hpp"

namespace pw::app {

void add_audit_command(CLI::App& app) {
    struct Options {
        std::string db;
        bool json = false;
        bool list = false;
    };
    auto o = std::make_shared<Options>();
    auto* cmd = app.add_subcommand("audit", "Verify the audit log's hash chain (imports, resolutions, corrections)");
    cmd->add_option("--db", o->db, "Trial database")->required()->check(CLI::ExistingFile);
    cmd->add_flag("--json", o->json, "Print the result (and the entries) as JSON");
    cmd->add_flag("--list", o->list, "Also list every entry");
    cmd->callback([o] {
        Store store = Store::open(o->db);
        const auto entries = audit_entries(store);
        const AuditCheck c = verify_audit_chain(entries);
        if (o->json) {
            nlohmann::json list = nlohmann::json::array();
            for (const auto& e : entries)
                list.push_back({{"id", e.id}, {"recorded_utc", e.recorded_utc}, {"action", e.action},
                                {"detail", nlohmann::json::parse(e.detail, nullptr, false)}, {"sha256", e.sha256}});
            std::cout << nlohmann::json{{"db", o->db},
                                        {"ok", c.ok()},
                                        {"entries", c.entries},
                                        {"first_broken", c.first_broken ? nlohmann::json(*c.first_broken) : nlohmann::json(nullptr)},
                                        {"message", c.message},
                                        {"log", list}}
                             .dump(2)
                      << "\n";
        } else {
            if (o->list)
                for (const auto& e : entries)
                    std::cout << fmt::format("{}\t{}\t{}\t{}\n", e.id, e.recorded_utc, e.action, e.detail);
            (c.ok() ? std::cout : std::cerr) << (c.ok() ? "" : "plotwright: audit: ") << o->db << ": " << c.message << "\n";
        }
        if (!c.ok()) throw ExitStatus{1};
    });
}

}  // namespace pw::app
