// plotwright: lays out, tags and records agricultural field trials.
// The one entry point: wires the commands together and turns errors into messages and exit codes.
#include <CLI/CLI.hpp>
#include <fmt/format.h>

#include <iostream>

#include "core/error.hpp"
#include "firmware_app/app.hpp"

int main(int argc, char** argv) {
    CLI::App app{"plotwright: lay out, tag, record and analyse agricultural field trials"};
    app.require_subcommand(1);
    app.set_version_flag("--version", "plotwright 0.1.0");
    pw::app::add_design_commands(app);
    pw::app::add_tags_command(app);
    pw::app::add_record_command(app);
    pw::app::add_export_command(app);
    pw::app::add_analyze_command(app);
    pw::app::add_plan_command(app);
    pw::app::add_verify_command(app);
    pw::app::add_map_command(app);
    pw::app::add_stakeout_command(app);
    pw::app::add_device_command(app);
    pw::app::add_sync_command(app);
    pw::app::add_conflicts_command(app);
    pw::app::add_resolve_command(app);
    pw::app::add_audit_command(app);
    pw::app::add_trait_command(app);
    pw::app::add_report_command(app);
    pw::app::add_demo_command(app);
    try {
        app.parse(argc, argv);
    } catch (const CLI::ParseError& e) {
        int code = app.exit(e);
        return code == 0 ? 0 : 2;
    } catch (const pw::app::ExitStatus& e) {
        return e.code;
    } catch (const pw::Error& e) {
        std::cerr << "plotwright: " << e.what() << "\n";
        return 1;
    } catch (const std::exception& e) {
        std::cerr << "plotwright: internal error: " << e.what() << "\n";
        return 70;
    }
    return 0;
}
