// The full-screen recorder's screens composed from a live session, at the handheld's 32x12 and at 80x24.
// What is checked is the promise to the technician (docs/recording.md): every screen fits, shows the
// trial and progress, keeps every key on screen, marks a refusal in words (not by colour alone, common
// practice for monochrome and sunlit screens) and never shows a treatment label in a blind trial.
#include <catch2/catch.hpp>

#include <fmt/format.h>

#include <algorithm>

#include "core/design/layout.hpp"
#include "core/tags/payload.hpp"
#include "firmware_app/recorder_view.hpp"

using namespace pw;
using namespace pw::app;

namespace {

struct NullSink final : RecordSink {
    std::int64_t n = 0;
    std::int64_t add_observation(const NewObservation&) override { return ++n; }
    void add_plot_event(const PlotEvent&) override {}
    std::vector<ObservationRecord> current_for_plot(int) const override { return {}; }
    std::vector<PlotEvent> events_for_plot(int) const override { return {}; }
};

TrialSpec view_spec(bool blind) {
    TrialSpec s;
    s.code = "VIEW7";
    s.title = "Screen check trial with a long title that will not fit";
    s.blocks = 2;
    s.blind = blind;
    s.field.plot_length_m = 5.0;
    s.field.plot_width_m = 2.0;
    s.field.alley_m = 1.0;
    s.gradient = {0.0, "slope"};
    s.treatments = {{"Sorghum early tall", "", true}, {"Sorghum late short", "", false}};
    TraitSpec kg;
    kg.name = "grain_kg";
    kg.unit = "kg";
    kg.min = 0;
    kg.max = 20;
    kg.decimals = 2;
    s.traits = {kg};
    return s;
}

std::size_t chars(const std::string& s) {
    return static_cast<std::size_t>(std::count_if(s.begin(), s.end(), [](char c) { return (c & 0xC0) != 0x80; }));
}

std::string text_of(const std::vector<ScreenLine>& screen) {
    std::string t;
    for (const auto& l : screen) t += l.text + "\n";
    return t;
}

}  // namespace

TEST_CASE("every screen fits the terminal and keeps status, prompt and keys", "[recorder-view]") {
    const auto size = GENERATE(table<int, int>({{32, 12}, {80, 24}, {40, 16}}));
    // Plain variables rather than a structured binding: clang 14 (the sanitizer build) cannot capture one
    // in a lambda.
    const int w = std::get<0>(size), h = std::get<1>(size);
    CAPTURE(w, h);
    TrialSpec spec = view_spec(false);
    Layout layout = design_trial(spec, 11);
    NullSink sink;
    RecordingSession s(spec, layout, sink, {"hh", "obs"}, [] { return "2026-06-01T08:00:00Z"; }, {});
    ViewState v;
    v.device = "hh";
    v.observer = "obs";

    auto check = [&](const std::vector<ScreenLine>& screen) {
        REQUIRE(screen.size() == static_cast<std::size_t>(h));
        for (const auto& l : screen) CHECK(chars(l.text) <= static_cast<std::size_t>(w));
        CHECK(screen.front().role == Role::Status);
        CHECK_THAT(screen.front().text, Catch::StartsWith("VIEW7 "));
        CHECK(screen.back().role == Role::Keys);
        CHECK_THAT(screen.back().text, Catch::Contains("F2skip"));
    };
    auto start = compose_screen(s, spec, v, w, h);
    check(start);
    CHECK_THAT(text_of(start), Catch::Contains("scan or type plot code"));

    v.add(s.handle(qr_payload(spec.code, layout.plots[0].id)));
    auto card = compose_screen(s, spec, v, w, h);
    check(card);
    CHECK_THAT(text_of(card), Catch::Contains(fmt::format("plot {}", layout.plots[0].id)));
    CHECK_THAT(text_of(card), Catch::Contains("grain_kg"));

    v.add(s.handle("99"));  // above the maximum: refused
    auto refused = compose_screen(s, spec, v, w, h);
    check(refused);
    auto it = std::find_if(refused.begin(), refused.end(), [](const ScreenLine& l) { return l.role == Role::Refused; });
    REQUIRE(it != refused.end());
    CHECK_THAT(it->text, Catch::StartsWith("NO: "));  // said in words, not by colour alone

    v.help = true;
    auto help = compose_screen(s, spec, v, w, h);
    check(help);
    CHECK_THAT(text_of(help), Catch::Contains("F10"));
}

TEST_CASE("a blind trial's screens never show a treatment label", "[recorder-view][blind]") {
    TrialSpec spec = view_spec(true);
    Layout layout = design_trial(spec, 11);
    NullSink sink;
    RecordingSession s(spec, layout, sink, {"hh", "obs"}, [] { return "2026-06-01T08:00:00Z"; }, {});
    ViewState v;
    std::string seen;
    for (const auto& p : layout.plots) {
        for (const std::string& line : {qr_payload(spec.code, p.id), std::string("5"), std::string("/skip")}) {
            v.add(s.handle(line));
            seen += text_of(compose_screen(s, spec, v, 32, 12)) + text_of(compose_screen(s, spec, v, 80, 24));
        }
    }
    for (const auto& t : spec.treatments) CHECK(seen.find(t.label) == std::string::npos);
    CHECK(seen.find("Sorghum") == std::string::npos);
}

// The flag key shows the spec's flags, each with the one key that chooses it, and undo is on the key bar
// of the smallest screen (docs/recording.md). The flags below are the test's own spec data.
TEST_CASE("the flag menu lists the spec's flags with their keys and the key bar shows undo", "[recorder-view][flags]") {
    auto [w, h] = GENERATE(table<int, int>({{32, 12}, {80, 24}}));
    CAPTURE(w, h);
    TrialSpec spec = view_spec(true);
    spec.flags = {{"damaged", "damaged", false}, {"washed_out", "washout", true}, {"lodged", "lodged", false}};
    Layout layout = design_trial(spec, 11);
    NullSink sink;
    RecordingSession s(spec, layout, sink, {"hh", "obs"}, [] { return "2026-06-01T08:00:00Z"; }, {});
    ViewState v;
    v.add(s.handle(qr_payload(spec.code, layout.plots[0].id)));
    CHECK_THAT(compose_screen(s, spec, v, w, h).back().text, Catch::Contains("F4undo"));
    v.choosing_flag = true;
    auto menu = compose_screen(s, spec, v, w, h);
    REQUIRE(menu.size() == static_cast<std::size_t>(h));
    for (const auto& l : menu) CHECK(chars(l.text) <= static_cast<std::size_t>(w));
    const std::string text = text_of(menu);
    CHECK_THAT(text, Catch::Contains("1 damaged"));
    CHECK_THAT(text, Catch::Contains("2 washout (no data)"));
    CHECK_THAT(text, Catch::Contains("3 lodged"));
    CHECK_THAT(text, Catch::Contains("press 1-3"));
    for (const auto& t : spec.treatments) CHECK(text.find(t.label) == std::string::npos);  // blind
    CHECK(flag_for_key(spec, '2') == &spec.flags[1]);
    CHECK(flag_for_key(spec, '4') == nullptr);
    CHECK(flag_for_key(spec, 'a') == nullptr);
}

TEST_CASE("nine flags still fit the 32x12 screen, two to a line", "[recorder-view][flags]") {
    TrialSpec spec = view_spec(false);
    spec.flags.clear();
    for (int i = 1; i <= 9; ++i) spec.flags.push_back({fmt::format("flag{}", i), fmt::format("reason{}", i), false});
    Layout layout = design_trial(spec, 11);
    NullSink sink;
    RecordingSession s(spec, layout, sink, {"hh", "obs"}, [] { return "2026-06-01T08:00:00Z"; }, {});
    ViewState v;
    v.add(s.handle(qr_payload(spec.code, layout.plots[0].id)));
    v.choosing_flag = true;
    auto menu = compose_screen(s, spec, v, 32, 12);
    REQUIRE(menu.size() == 12u);
    for (const auto& l : menu) CHECK(chars(l.text) <= 32u);
    const std::string text = text_of(menu);
    for (int i = 1; i <= 9; ++i) CHECK_THAT(text, Catch::Contains(fmt::format("{} reason{}", i, i)));
}
