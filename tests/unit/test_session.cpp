// The recording session driven line by line, as the scanner and the keypad would drive it, over an
// in-memory sink. These tests check the field-day rules the recorder promises (docs/recording.md):
// refusals write nothing, a scan interrupts trait entry, corrections supersede and keep the original,
// blind trials never show a treatment. The rules are common practice (DOMAIN: GLP-style corrections,
// keyboard-wedge scanners type the code plus Enter, blind scoring); the check characters in the codes
// typed here come from ISO/IEC 7064 MOD 37,36, computed by hand in the comments.
#include <catch2/catch.hpp>

#include <fmt/format.h>

#include <algorithm>

#include "core/design/layout.hpp"
#include "core/error.hpp"
#include "core/record/session.hpp"
#include "core/tags/payload.hpp"

using namespace pw;

namespace {

struct MemorySink final : RecordSink {
    std::vector<ObservationRecord> rows;
    std::vector<PlotEvent> events;
    std::int64_t add_observation(const NewObservation& obs) override {
        rows.push_back({static_cast<std::int64_t>(rows.size() + 1), obs});
        return rows.back().id;
    }
    void add_plot_event(const PlotEvent& ev) override { events.push_back(ev); }
    std::vector<ObservationRecord> current_for_plot(int plot) const override {
        std::vector<ObservationRecord> out;
        for (const auto& r : rows) {
            bool superseded = std::any_of(rows.begin(), rows.end(),
                                          [&](const ObservationRecord& o) { return o.obs.supersedes == r.id; });
            if (r.obs.plot == plot && !superseded) out.push_back(r);
        }
        return out;
    }
    std::vector<PlotEvent> events_for_plot(int plot) const override {
        std::vector<PlotEvent> out;
        for (const auto& e : events)
            if (e.plot == plot) out.push_back(e);
        return out;
    }
};

TrialSpec small_spec(bool blind) {
    TrialSpec s;
    s.code = "TST1";
    s.title = "session test";
    s.blocks = 2;
    s.blind = blind;
    s.field.plot_length_m = 5.0;
    s.field.plot_width_m = 2.0;
    s.field.alley_m = 1.0;
    s.gradient = {0.0, "test gradient"};
    s.treatments = {{"Alpha", "", true}, {"Bravo", "", false}, {"Charlie", "", false}};
    TraitSpec kg;
    kg.name = "grain_kg";
    kg.unit = "kg";
    kg.kind = TraitKind::Number;
    kg.min = 0;
    kg.max = 20;
    kg.decimals = 2;
    TraitSpec score;
    score.name = "lodging";
    score.kind = TraitKind::Score;
    score.min = 1;
    score.max = 9;
    s.traits = {kg, score};
    return s;
}

struct Fixture {
    explicit Fixture(bool blind = false)
        : spec(small_spec(blind)), layout(design_rcbd(spec, 7)),
          session(spec, layout, sink, {"hh-1", "tester"}, [this] { return "2026-06-14T09:00:" + tick(); }, {}) {}
    std::string tick() { return fmt::format("{:02}", (seconds++) % 60); }
    std::string scan(int plot) const { return qr_payload(spec.code, plot); }
    std::vector<Message> say(const std::string& line) { return session.handle(line); }
    static bool refused(const std::vector<Message>& m) {
        return !m.empty() && std::all_of(m.begin(), m.end(), [](auto& x) { return x.severity == Severity::Refused; });
    }
    static std::string all(const std::vector<Message>& m) {
        std::string s;
        for (auto& x : m) s += x.text + "\n";
        return s;
    }
    int seconds = 0;
    TrialSpec spec;
    Layout layout;
    MemorySink sink;
    RecordingSession session;
};

}  // namespace

TEST_CASE("a scanned plot is recorded trait by trait in the spec's order", "[session]") {
    Fixture f;
    int plot = f.layout.plots[0].id;
    auto m = f.say(f.scan(plot));
    CHECK_FALSE(Fixture::refused(m));
    REQUIRE(f.session.open_plot() != nullptr);
    CHECK(f.session.open_plot()->id == plot);
    CHECK(f.session.prompt().rfind("grain_kg", 0) == 0);
    f.say("12.5");
    f.say("3");
    REQUIRE(f.sink.rows.size() == 2);
    CHECK(f.sink.rows[0].obs.trait == "grain_kg");
    CHECK(f.sink.rows[0].obs.value == "12.50");
    CHECK(f.sink.rows[0].obs.device == "hh-1");
    CHECK(f.sink.rows[0].obs.observer == "tester");
    CHECK(f.sink.rows[1].obs.trait == "lodging");
    CHECK(f.session.open_plot() == nullptr);  // closed after the last trait
    CHECK(f.session.plots_done() == 1);
}

TEST_CASE("refused lines write nothing and say why", "[session]") {
    Fixture f;
    int plot = f.layout.plots[0].id;
    SECTION("a tag of another trial") {
        auto m = f.say(qr_payload("OTHER9", plot));
        CHECK(Fixture::refused(m));
        CHECK_THAT(Fixture::all(m), Catch::Contains("trial OTHER9"));
    }
    SECTION("an unknown plot") {
        auto m = f.say(qr_payload(f.spec.code, 999));
        CHECK(Fixture::refused(m));
        CHECK_THAT(Fixture::all(m), Catch::Contains("no plot 999"));
    }
    SECTION("garbage") { CHECK(Fixture::refused(f.say("hello there"))); }
    SECTION("a value out of range") {
        f.say(f.scan(plot));
        auto m = f.say("25");
        CHECK(Fixture::refused(m));
        CHECK(f.session.asking_trait() == std::optional<std::size_t>(0));  // asked again
    }
    SECTION("a flag without a reason") {
        f.say(f.scan(plot));
        CHECK(Fixture::refused(f.say("/flag damaged")));
        CHECK(f.sink.events.empty());
    }
    CHECK(f.sink.rows.empty());
}

TEST_CASE("a scan during trait entry opens the scanned plot instead of landing in the field", "[session]") {
    Fixture f;
    int first = f.layout.plots[0].id, second = f.layout.plots[1].id;
    f.say(f.scan(first));
    auto m = f.say(f.scan(second));
    CHECK_FALSE(Fixture::refused(m));
    CHECK(f.session.open_plot()->id == second);
    CHECK(f.sink.rows.empty());
}

TEST_CASE("a typed human code in lower case opens the plot", "[session]") {
    Fixture f;
    int plot = f.layout.plots[2].id;
    std::string code = human_code(f.spec.code, plot);
    std::transform(code.begin(), code.end(), code.begin(), [](unsigned char c) { return std::tolower(c); });
    f.say(code);
    REQUIRE(f.session.open_plot() != nullptr);
    CHECK(f.session.open_plot()->id == plot);
}

TEST_CASE("an empty line leaves a trait unrecorded and /skip leaves the plot", "[session]") {
    Fixture f;
    f.say(f.scan(f.layout.plots[0].id));
    f.say("");
    CHECK(f.session.asking_trait() == std::optional<std::size_t>(1));
    f.say("/skip");
    CHECK(f.session.open_plot() == nullptr);
    CHECK(f.sink.rows.empty());
}

TEST_CASE("/fix supersedes the last value and keeps the original", "[session]") {
    Fixture f;
    int plot = f.layout.plots[0].id;
    f.say(f.scan(plot));
    f.say("12.5");
    f.say("/fix transposed digits");
    CHECK(f.session.asking_trait() == std::optional<std::size_t>(0));
    f.say("15.2");
    REQUIRE(f.sink.rows.size() == 2);
    CHECK(f.sink.rows[1].obs.supersedes == f.sink.rows[0].id);
    CHECK(f.sink.rows[1].obs.note == "corrected: transposed digits");
    CHECK(f.sink.rows[0].obs.value == "12.50");  // the original is still there
    CHECK(f.session.asking_trait() == std::optional<std::size_t>(1));  // back where we were
    auto current = f.sink.current_for_plot(plot);
    REQUIRE(current.size() == 1);
    CHECK(current[0].obs.value == "15.20");
}

TEST_CASE("re-visiting a plot shows the earlier value and a new one supersedes it", "[session]") {
    Fixture f;
    int plot = f.layout.plots[0].id;
    f.say(f.scan(plot));
    f.say("10");
    f.say("/skip");
    auto m = f.say(f.scan(plot));
    CHECK_THAT(Fixture::all(m), Catch::Contains("grain_kg = 10.00"));
    CHECK_THAT(f.session.prompt(), Catch::Contains("[was 10.00]"));
    f.say("11");
    REQUIRE(f.sink.rows.size() == 2);
    CHECK(f.sink.rows[1].obs.supersedes == f.sink.rows[0].id);
}

TEST_CASE("a flagged plot keeps its reason and counts as visited", "[session]") {
    Fixture f;
    int plot = f.layout.plots[0].id;
    f.say(f.scan(plot));
    f.say("/flag missing washed out");
    REQUIRE(f.sink.events.size() == 1);
    CHECK(f.sink.events[0].state == PlotState::Missing);
    CHECK(f.sink.events[0].reason == "washed out");
    CHECK(f.session.open_plot() == nullptr);
    CHECK(f.session.plots_done() == 1);
}

TEST_CASE("leaving a block unfinished warns with the plots still missing", "[session]") {
    Fixture f;
    const PlotPlacement* other_block = nullptr;
    for (const auto& p : f.layout.plots)
        if (p.block == 2) other_block = &p;
    f.say(f.scan(f.layout.plots[0].id));
    auto m = f.say(f.scan(other_block->id));
    bool warned = std::any_of(m.begin(), m.end(), [](auto& x) {
        return x.severity == Severity::Warning && x.text.find("block 1 is not finished") != std::string::npos;
    });
    CHECK(warned);
}

TEST_CASE("a blind trial never shows a treatment label", "[session][blind]") {
    Fixture f(true);
    std::string seen;
    for (const auto& p : f.layout.plots) {
        for (auto& m : f.say(f.scan(p.id))) seen += m.text + "\n";
        seen += f.session.prompt() + "\n";
        for (auto& m : f.say("5")) seen += m.text + "\n";
        for (auto& l : f.session.plot_card()) seen += l + "\n";
        for (auto& m : f.say("/flag lodged leaning")) seen += m.text + "\n";
        for (auto& m : f.say("/undo")) seen += m.text + "\n";
        for (auto& l : f.session.plot_card()) seen += l + "\n";
        for (auto& m : f.say("/skip")) seen += m.text + "\n";
    }
    for (const auto& t : f.spec.treatments) CHECK(seen.find(t.label) == std::string::npos);
    CHECK_THAT(seen, Catch::Contains("(blind)"));
}

// Undo (docs/recording.md): the store stays append-only (GLP, DOMAIN [24]: a correction never hides the
// old value), so an undo is a new row superseding the undone one: the earlier value written again, or a
// withdrawal (empty value, no number) when the undone value was the first. The expected rows below are
// read off that rule by hand.
TEST_CASE("/undo of a first value writes a withdrawal and leaves the trait without a value", "[session][undo]") {
    Fixture f;
    int plot = f.layout.plots[0].id;
    f.say(f.scan(plot));
    f.say("12.5");
    CHECK(f.session.plots_done() == 1);
    auto m = f.say("/undo");
    CHECK_FALSE(Fixture::refused(m));
    CHECK_THAT(Fixture::all(m), Catch::Contains(fmt::format("plot {} grain_kg back to no value", plot)));
    REQUIRE(f.sink.rows.size() == 2);
    CHECK(f.sink.rows[0].obs.value == "12.50");  // the undone value stays in the history
    CHECK(f.sink.rows[1].obs.value.empty());
    CHECK_FALSE(f.sink.rows[1].obs.number.has_value());
    CHECK(f.sink.rows[1].obs.supersedes == f.sink.rows[0].id);
    CHECK_THAT(f.sink.rows[1].obs.note, Catch::StartsWith("undone"));
    // Back where the value was asked, with nothing shown as recorded.
    CHECK(f.session.asking_trait() == std::optional<std::size_t>(0));
    CHECK_THAT(f.session.prompt(), !Catch::Contains("[was"));
    for (const auto& l : f.session.plot_card()) CHECK(l.find("grain_kg =") == std::string::npos);
    CHECK(f.session.plots_done() == 0);  // no value and no flag: the plot is not done any more
    // A value typed now supersedes the withdrawal, so the plot and trait stay one chain.
    f.say("13");
    REQUIRE(f.sink.rows.size() == 3);
    CHECK(f.sink.rows[2].obs.supersedes == f.sink.rows[1].id);
    auto current = f.sink.current_for_plot(plot);
    REQUIRE(current.size() == 1);
    CHECK(current[0].obs.value == "13.00");
}

TEST_CASE("/undo walks back through the session's values, a /fix included, and never past its start",
          "[session][undo]") {
    Fixture f;
    int first = f.layout.plots[0].id, second = f.layout.plots[1].id;
    // A value from an earlier session: undo must never take it back.
    NewObservation earlier;
    earlier.plot = second;
    earlier.trait = "grain_kg";
    earlier.value = "9.00";
    earlier.number = 9.0;
    earlier.recorded_utc = "2026-06-13T09:00:00Z";
    earlier.device = "hh-0";
    earlier.observer = "yesterday";
    f.sink.add_observation(earlier);  // id 1

    f.say(f.scan(first));
    f.say("12.5");                     // id 2
    f.say("/fix transposed digits");
    f.say("15.2");                     // id 3 supersedes 2
    f.say(f.scan(second));
    f.say("10");                       // id 4 supersedes the earlier 9.00 (id 1)
    REQUIRE(f.sink.rows.size() == 4);
    CHECK(f.sink.rows[3].obs.supersedes == 1);

    auto m = f.say("/undo");           // id 5: back to yesterday's 9.00
    CHECK_THAT(Fixture::all(m), Catch::Contains(fmt::format("plot {} grain_kg back to 9.00 kg", second)));
    REQUIRE(f.sink.rows.size() == 5);
    CHECK(f.sink.rows[4].obs.value == "9.00");
    CHECK(f.sink.rows[4].obs.number == Approx(9.0));
    CHECK(f.sink.rows[4].obs.supersedes == 4);

    m = f.say("/undo");                // id 6: the fix taken back, plot `first` reopened at grain_kg
    CHECK_THAT(Fixture::all(m), Catch::Contains(fmt::format("plot {} grain_kg back to 12.50 kg", first)));
    REQUIRE(f.session.open_plot() != nullptr);
    CHECK(f.session.open_plot()->id == first);
    CHECK(f.session.asking_trait() == std::optional<std::size_t>(0));
    CHECK_THAT(f.session.prompt(), Catch::Contains("[was 12.50]"));
    REQUIRE(f.sink.rows.size() == 6);
    CHECK(f.sink.rows[5].obs.supersedes == 3);

    m = f.say("/undo");                // id 7: the first value withdrawn, superseding the restored row 6
    CHECK_THAT(Fixture::all(m), Catch::Contains(fmt::format("plot {} grain_kg back to no value", first)));
    REQUIRE(f.sink.rows.size() == 7);
    CHECK(f.sink.rows[6].obs.supersedes == 6);
    CHECK(f.sink.rows[6].obs.value.empty());

    m = f.say("/undo");                // nothing of this session is left: refused, nothing written
    CHECK(Fixture::refused(m));
    CHECK_THAT(Fixture::all(m), Catch::Contains("nothing left to undo"));
    CHECK(f.sink.rows.size() == 7);
    auto current = f.sink.current_for_plot(second);
    REQUIRE(current.size() == 1);
    CHECK(current[0].obs.value == "9.00");  // the earlier session's value is in force again
    CHECK(f.session.plots_done() == 1);     // `second` keeps the earlier value; `first` has none again
}

TEST_CASE("/undo with nothing saved says so and writes nothing", "[session][undo]") {
    Fixture f;
    auto m = f.say("/undo");
    CHECK(Fixture::refused(m));
    CHECK_THAT(Fixture::all(m), Catch::Contains("nothing to undo"));
    CHECK(f.sink.rows.empty());
}

// Flags are data of the spec (docs/spec.md [[flags]]); the plot status with a cause is common practice
// (DOMAIN: "plot status normal/damaged/missing + cause").
TEST_CASE("/flag takes the spec's flags by name, with a note; a flag counting as missing closes the plot",
          "[session][flags]") {
    Fixture f;
    f.spec.flags = {{"lodged", "lodged", false}, {"hailed", "hail", false}, {"gone", "gone", true}};
    int plot = f.layout.plots[0].id;
    f.say(f.scan(plot));
    auto m = f.say("/flag damaged hail");  // not a flag of this spec
    CHECK(Fixture::refused(m));
    CHECK_THAT(Fixture::all(m), Catch::Contains("lodged, hailed, gone"));
    CHECK(Fixture::refused(f.say("/flag lodged")));  // a note is required
    CHECK(f.sink.events.empty());

    m = f.say("/flag LODGED stems flat after the storm");
    CHECK_FALSE(Fixture::refused(m));
    REQUIRE(f.sink.events.size() == 1);
    CHECK(f.sink.events[0].flag == "lodged");
    CHECK(f.sink.events[0].state == PlotState::Damaged);  // the plot's values are kept
    CHECK(f.sink.events[0].reason == "stems flat after the storm");
    REQUIRE(f.session.open_plot() != nullptr);  // still recording it
    std::string card;
    for (const auto& l : f.session.plot_card()) card += l + "\n";
    CHECK_THAT(card, Catch::Contains("flagged lodged: stems flat after the storm"));

    f.say("/flag gone washed out");
    REQUIRE(f.sink.events.size() == 2);
    CHECK(f.sink.events[1].flag == "gone");
    CHECK(f.sink.events[1].state == PlotState::Missing);
    CHECK(f.session.open_plot() == nullptr);
    CHECK(f.session.plots_done() == 1);
}

TEST_CASE("a spec without flags offers damaged, missing and lodged", "[session][flags]") {
    Fixture f;
    f.say(f.scan(f.layout.plots[0].id));
    auto m = f.say("/help");
    CHECK_THAT(Fixture::all(m), Catch::Contains("damaged, missing, lodged"));
    f.say("/flag lodged leaning");
    REQUIRE(f.sink.events.size() == 1);
    CHECK(f.sink.events[0].flag == "lodged");
    CHECK(f.sink.events[0].state == PlotState::Damaged);
}
