// Trait values as typed by a technician (core/traits/value.hpp): accepted forms with their canonical text,
// boundaries, and refusals whose message names the trait and what it accepts.
//
// Sources for the expected values: the decimal notation of numbers (canonical text worked by hand: the
// typed digits padded with zeros, nothing rounded), the Gregorian calendar rule of ISO 8601 (a year is a leap
// year when divisible by 4, except centuries not divisible by 400; every date below was also checked with
// Python 3's datetime.date.fromisoformat, a general-purpose reference), Unicode's control characters
// (C0 U+0000-U+001F, DEL U+007F, C1 U+0080-U+009F) and UTF-8 as defined by RFC 3629.
#include <catch2/catch.hpp>

#include <string>

#include "core/error.hpp"
#include "core/traits/value.hpp"

namespace {

pw::TraitSpec number_trait() {
    pw::TraitSpec t;
    t.name = "grain_kg";
    t.label = "Grain weight";
    t.unit = "kg";
    t.kind = pw::TraitKind::Number;
    t.min = 0;
    t.max = 40;
    t.decimals = 2;
    return t;
}

pw::TraitSpec count_trait() {
    pw::TraitSpec t;
    t.name = "stand";
    t.label = "Stand count";
    t.unit = "plants";
    t.kind = pw::TraitKind::Count;
    t.max = 400;
    return t;
}

pw::TraitSpec score_trait() {
    pw::TraitSpec t;
    t.name = "lodging";
    t.label = "Lodging";
    t.kind = pw::TraitKind::Score;
    t.min = 1;
    t.max = 9;
    t.score_labels = {"upright", "very slight", "slight", "slight to moderate", "moderate",
                      "moderate to severe", "severe", "very severe", "flat"};
    return t;
}

pw::TraitSpec date_trait() {
    pw::TraitSpec t;
    t.name = "flowering";
    t.label = "50% flowering";
    t.kind = pw::TraitKind::Date;
    return t;
}

pw::TraitSpec text_trait(int max_length) {
    pw::TraitSpec t;
    t.name = "note";
    t.label = "Note";
    t.kind = pw::TraitKind::Text;
    t.max_length = max_length;
    return t;
}

std::string refusal(const pw::TraitSpec& t, const std::string& typed) {
    try {
        (void)pw::parse_trait_value(t, typed);
    } catch (const pw::InputError& e) {
        return e.what();
    }
    return "(accepted)";
}

}  // namespace

TEST_CASE("A number is kept with exactly the trait's decimals and never rounded", "[traits][number]") {
    // Decimal notation worked by hand: canonical text pads the typed digits with zeros to 2 decimals.
    auto [typed, text, value] = GENERATE(table<std::string, std::string, double>({
        {"12.4", "12.40", 12.4},
        {"12.40", "12.40", 12.4},
        {"12.400", "12.40", 12.4},   // trailing zeros lose nothing, so they are accepted
        {"  7 ", "7.00", 7.0},       // surrounding blanks ignored
        {"0", "0.00", 0.0},          // boundary: the minimum
        {"40", "40.00", 40.0},       // boundary: the maximum
        {"40.00", "40.00", 40.0},
        {".5", "0.50", 0.5},
        {"5.", "5.00", 5.0},
        {"007.25", "7.25", 7.25},
        {"-0", "0.00", 0.0},         // negative zero is zero
    }));
    CAPTURE(typed);
    const auto v = pw::parse_trait_value(number_trait(), typed);
    CHECK(v.text == text);
    REQUIRE(v.number);
    CHECK(*v.number == value);
}

TEST_CASE("A number trait with no decimals or negative range accepts the matching forms", "[traits][number]") {
    auto t = number_trait();
    t.decimals = 0;
    t.min = -20;
    t.max = 20;
    // Decimal notation by hand: a whole number has no point in its canonical text.
    CHECK(pw::parse_trait_value(t, "-20").text == "-20");
    CHECK(pw::parse_trait_value(t, "3.0").text == "3");
    CHECK_THROWS_WITH(pw::parse_trait_value(t, "3.5"), Catch::Contains("more than the 0 kept"));
}

TEST_CASE("A number that is garbage, out of range or too precise is refused with the trait and its range",
          "[traits][number]") {
    // Refusal rules of the trait format: range 0 to 40 kg, 2 decimals, '.' as the decimal point.
    auto [typed, fragment] = GENERATE(table<std::string, std::string>({
        {"", "nothing was entered"},
        {"   ", "nothing was entered"},
        {"nan", "is not a number"},
        {"NaN", "is not a number"},
        {"inf", "is not a number"},
        {"-inf", "is not a number"},
        {"1e3", "is not a number"},
        {"0x10", "is not a number"},
        {"12 kg", "is not a number"},
        {"1.2.3", "is not a number"},
        {"-", "is not a number"},
        {".", "is not a number"},
        {"+5", "is not a number"},
        {"12,5", "uses a comma"},
        {"12.345", "has 3 decimals"},
        {"40.01", "above the maximum 40 kg"},
        {"51.2", "above the maximum 40 kg"},
        {"-0.01", "below the minimum 0 kg"},
        {"1234567890123456", "too large"},
    }));
    CAPTURE(typed);
    const std::string message = refusal(number_trait(), typed);
    CHECK_THAT(message, Catch::StartsWith("Grain weight: "));
    CHECK_THAT(message, Catch::Contains(fragment));
    CHECK_THAT(message, Catch::Contains("kg, 0 to 40, 2 decimals"));
}

TEST_CASE("A count is a whole number of 0 or more within its range", "[traits][count]") {
    // Counts are non-negative integers (definition of a count); range 0 (default) to 400 plants.
    auto [typed, text] = GENERATE(table<std::string, std::string>({
        {"0", "0"}, {"400", "400"}, {"17", "17"}, {"0017", "17"}, {" 52\t", "52"},
    }));
    CAPTURE(typed);
    const auto v = pw::parse_trait_value(count_trait(), typed);
    CHECK(v.text == text);
    REQUIRE(v.number);
    CHECK(*v.number == std::stod(text));
}

TEST_CASE("A count that is negative, fractional, garbage or out of range is refused", "[traits][count]") {
    auto [typed, fragment] = GENERATE(table<std::string, std::string>({
        {"-1", "negative"},
        {"3.5", "not a whole number"},
        {"3.0", "not a whole number"},
        {"3,0", "not a whole number"},
        {"12a", "not a count"},
        {"nan", "not a count"},
        {"401", "above the maximum 400 plants"},
        {"99999999999999999999", "too large"},
        {"", "nothing was entered"},
    }));
    CAPTURE(typed);
    const std::string message = refusal(count_trait(), typed);
    CHECK_THAT(message, Catch::StartsWith("Stand count: "));
    CHECK_THAT(message, Catch::Contains(fragment));
    CHECK_THAT(message, Catch::Contains("plants, whole number, 0 to 400"));
}

TEST_CASE("A score is a level of the scale or one of its labels, in any case", "[traits][score]") {
    // A 1-9 lodging scale with one label per level (common practice: 1 = none, 9 = worst).
    auto [typed, text] = GENERATE(table<std::string, std::string>({
        {"1", "1"}, {"9", "9"}, {"5", "5"}, {"upright", "1"}, {"FLAT", "9"}, {"  Slight to Moderate ", "4"},
    }));
    CAPTURE(typed);
    const auto v = pw::parse_trait_value(score_trait(), typed);
    CHECK(v.text == text);
    REQUIRE(v.number);
    CHECK(*v.number == std::stod(text));
}

TEST_CASE("A score off the scale, fractional or an unknown word is refused", "[traits][score]") {
    auto [typed, fragment] = GENERATE(table<std::string, std::string>({
        {"0", "below the minimum 1"},
        {"10", "above the maximum 9"},
        {"4.5", "not a score"},
        {"leaning", "not a score or one of its labels"},
        {"", "nothing was entered"},
    }));
    CAPTURE(typed);
    const std::string message = refusal(score_trait(), typed);
    CHECK_THAT(message, Catch::StartsWith("Lodging: "));
    CHECK_THAT(message, Catch::Contains(fragment));
    CHECK_THAT(message, Catch::Contains("score 1 to 9 or its label (1 upright"));
}

TEST_CASE("A date is a real day of the Gregorian calendar written YYYY-MM-DD", "[traits][date]") {
    // ISO 8601 calendar dates; leap years by the Gregorian rule (divisible by 4, centuries only by 400).
    auto [typed, ok] = GENERATE(table<std::string, bool>({
        {"2026-06-14", true},
        {"2024-02-29", true},    // 2024 divisible by 4
        {"2000-02-29", true},    // century divisible by 400
        {"1900-02-29", false},   // century not divisible by 400
        {"2100-02-29", false},   // century not divisible by 400
        {"2023-02-29", false},   // not divisible by 4
        {"2026-04-31", false},   // April has 30 days
        {"2026-06-30", true},
        {"2026-12-31", true},
        {"2026-01-01", true},
        {"2026-13-01", false},
        {"2026-00-10", false},
        {"2026-06-00", false},
    }));
    CAPTURE(typed);
    if (ok) {
        const auto v = pw::parse_trait_value(date_trait(), typed);
        CHECK(v.text == typed);
        CHECK_FALSE(v.number);
    } else {
        CHECK_THAT(refusal(date_trait(), typed), Catch::Contains("not a day of the calendar"));
    }
}

TEST_CASE("A date in another shape or an implausible year is refused", "[traits][date]") {
    // ISO 8601 extended calendar date form: four-digit year, two-digit month and day, hyphens.
    auto [typed, fragment] = GENERATE(table<std::string, std::string>({
        {"14/06/2026", "not a date written YYYY-MM-DD"},
        {"2026-6-14", "not a date written YYYY-MM-DD"},
        {"20260614", "not a date written YYYY-MM-DD"},
        {"2026-06-14T09:00", "not a date written YYYY-MM-DD"},
        {"2026-0a-14", "not a date written YYYY-MM-DD"},
        {"0226-06-14", "outside 1900 to 2199"},
        {"", "nothing was entered"},
    }));
    CAPTURE(typed);
    const std::string message = refusal(date_trait(), typed);
    CHECK_THAT(message, Catch::StartsWith("50% flowering: "));
    CHECK_THAT(message, Catch::Contains(fragment));
    CHECK_THAT(message, Catch::Contains("date YYYY-MM-DD"));
}

TEST_CASE("A note is trimmed, non-empty, free of control characters and within its length", "[traits][text]") {
    const auto t = text_trait(10);
    // Lengths count Unicode code points (UTF-8, RFC 3629): "déjà vu ü" is 9 characters in 12 bytes.
    CHECK(pw::parse_trait_value(t, "  hail  ").text == "hail");
    CHECK(pw::parse_trait_value(t, "déjà vu ü").text == "déjà vu ü");
    CHECK(pw::parse_trait_value(t, "0123456789").text == "0123456789");  // boundary: exactly 10
    CHECK_FALSE(pw::parse_trait_value(t, "hail").number);

    auto [typed, fragment] = GENERATE(table<std::string, std::string>({
        {"01234567890", "11 characters, more than 10"},
        {"", "nothing was entered"},
        {" \t ", "nothing was entered"},
        {"a\tb", "control character (U+0009)"},
        {"a\nb", "control character (U+000A)"},
        {"a\x7f" "b", "control character (U+007F)"},
        {"a\xc2\x85" "b", "control character (U+0085)"},   // NEL, a C1 control
        {"a\xff" "b", "not valid UTF-8"},
        {"a\xc0\xaf", "not valid UTF-8"},                   // overlong '/'
        {"\xed\xa0\x80", "not valid UTF-8"},                // a UTF-16 surrogate
    }));
    CAPTURE(typed);
    const std::string message = refusal(t, typed);
    CHECK_THAT(message, Catch::StartsWith("Note: "));
    CHECK_THAT(message, Catch::Contains(fragment));
    CHECK_THAT(message, Catch::Contains("text, at most 10 characters"));
}

TEST_CASE("describe_trait states unit, range and precision in one line", "[traits]") {
    // The wording agreed in core/traits/value.hpp ("kg, 0 to 40, 2 decimals" / "score 1 to 9" / "date YYYY-MM-DD").
    CHECK(pw::describe_trait(number_trait()) == "kg, 0 to 40, 2 decimals");
    auto open = number_trait();
    open.min.reset();
    open.max.reset();
    open.decimals = 1;
    CHECK(pw::describe_trait(open) == "kg, any value, 1 decimal");
    auto plain = score_trait();
    plain.score_labels.clear();
    CHECK(pw::describe_trait(plain) == "score 1 to 9");
    CHECK(pw::describe_trait(date_trait()) == "date YYYY-MM-DD");
    CHECK(pw::describe_trait(count_trait()) == "plants, whole number, 0 to 400");
    CHECK(pw::describe_trait(text_trait(200)) == "text, at most 200 characters");
}
