// CSV reading and writing (storage/csv_table.hpp) against RFC 4180 (Shafranovich, 2005), section 2,
// rule by rule, and against Python's csv module, a general-purpose reference reader and writer
// (Debian's /usr/bin/python3, csv.writer with QUOTE_MINIMAL and CRLF line ends, csv.reader).
//
// The RFC's examples are quoted from memory of the RFC text (rules 6 and 7 verbatim in many pages seen);
// tests/data/csv_rfc4180_example.json is a worked example computed with Python's csv module (its
// attribution is inside the file).
#include <catch2/catch.hpp>

#include <stdio.h>
#include <stdlib.h>
#include <unistd.h>

#include <filesystem>
#include <fstream>
#include <nlohmann/json.hpp>
#include <sstream>

#include "core/error.hpp"
#include "storage/csv_table.hpp"

using namespace pw;
using Rows = std::vector<std::vector<std::string>>;

namespace {

std::string slurp(const std::string& path) {
    std::ifstream in(path, std::ios::binary);
    std::ostringstream s;
    s << in.rdbuf();
    return s.str();
}

std::string encode(const Rows& rows) {
    std::string out;
    for (const auto& r : rows) out += csv_record(r);
    return out;
}

// Runs a command and returns its standard output; fails the test if it exits non-zero.
std::string run(const std::string& cmd) {
    FILE* p = popen(cmd.c_str(), "r");
    REQUIRE(p != nullptr);
    std::string out;
    char buf[4096];
    std::size_t n;
    while ((n = fread(buf, 1, sizeof buf, p)) > 0) out.append(buf, n);
    const int status = pclose(p);
    INFO(cmd);
    REQUIRE(status == 0);
    return out;
}

struct TempFile {
    std::string path;
    explicit TempFile(const std::string& content) {
        std::string tmpl = (std::filesystem::temp_directory_path() / "pw-csv-XXXXXX").string();
        int fd = mkstemp(tmpl.data());
        if (fd < 0) throw std::runtime_error("mkstemp failed");
        close(fd);
        path = tmpl;
        std::ofstream(path, std::ios::binary) << content;
    }
    ~TempFile() { std::remove(path.c_str()); }
};

// Fields that exercise every quoting rule: comma, quote, CR, LF, CRLF, spaces, empty, non-ASCII.
const Rows kTricky = {
    {"plot", "treatment", "note"},
    {"101", "N0", "plain"},
    {"102", "N60, split", "said \"ok\""},
    {"103", "", "line1\r\nline2"},
    {"104", " spaced ", "lone\rCR"},
    {"105", "\"", "lone\nLF"},
    {"106", "Ähre Ø 5 mm", ","},
};

}  // namespace

TEST_CASE("The worked RFC 4180 example is written byte for byte and read back", "[csv]") {
    const auto ex = nlohmann::json::parse(slurp(std::string(PW_TEST_DATA_DIR) + "/csv_rfc4180_example.json"));
    const Rows rows = ex.at("rows").get<Rows>();
    const std::string text = ex.at("rfc4180_text").get<std::string>();
    CHECK(encode(rows) == text);
    const CsvTable t = parse_csv(text, "example.csv");
    CHECK(t.header == rows[0]);
    CHECK(t.rows == Rows(rows.begin() + 1, rows.end()));
}

TEST_CASE("RFC 4180 section 2 rule 1: each record is on its own line, ended by CRLF", "[csv][rfc4180]") {
    // RFC example: aaa,bbb,ccc CRLF zzz,yyy,xxx CRLF
    CHECK(csv_record({"aaa", "bbb", "ccc"}) + csv_record({"zzz", "yyy", "xxx"}) == "aaa,bbb,ccc\r\nzzz,yyy,xxx\r\n");
    const CsvTable t = parse_csv("aaa,bbb,ccc\r\nzzz,yyy,xxx\r\n", "rule1.csv");
    CHECK(t.rows == Rows{{"zzz", "yyy", "xxx"}});
}

TEST_CASE("RFC 4180 section 2 rule 2: the last record may lack its line break", "[csv][rfc4180]") {
    // RFC example: aaa,bbb,ccc CRLF zzz,yyy,xxx (no final CRLF)
    const CsvTable t = parse_csv("aaa,bbb,ccc\r\nzzz,yyy,xxx", "rule2.csv");
    CHECK(t.header == std::vector<std::string>{"aaa", "bbb", "ccc"});
    CHECK(t.rows == Rows{{"zzz", "yyy", "xxx"}});
}

TEST_CASE("RFC 4180 section 2 rule 3: a header line with as many fields as the records", "[csv][rfc4180]") {
    // RFC example: field_name,field_name,field_name CRLF aaa,bbb,ccc CRLF zzz,yyy,xxx CRLF
    const CsvTable t = parse_csv("field_name,field_name,field_name\r\naaa,bbb,ccc\r\nzzz,yyy,xxx\r\n", "rule3.csv");
    CHECK(t.header.size() == 3);
    CHECK(t.rows.size() == 2);
    SECTION("a record with another number of fields is refused, naming the source and line") {
        CHECK_THROWS_WITH(parse_csv("plot,block\r\n101,1\r\n102,1,extra\r\n", "plots.csv"),
                          Catch::Contains("plots.csv:3") && Catch::Contains("3 fields") &&
                              Catch::Contains("header has 2"));
        CHECK_THROWS_AS(parse_csv("plot,block\r\n101\r\n", "plots.csv"), InputError);
    }
    SECTION("a column is found by name, or the columns present are listed") {
        CHECK(parse_csv("plot,block\r\n", "p.csv").column("block", "p.csv") == 1);
        CHECK_THROWS_WITH(parse_csv("plot,block\r\n", "p.csv").column("yield", "p.csv"),
                          Catch::Contains("p.csv") && Catch::Contains("'yield'") && Catch::Contains("plot, block"));
    }
    SECTION("the RFC's header repeats its name: asked for by that name, the column is ambiguous and refused") {
        CHECK_THROWS_WITH(t.column("field_name", "rule3.csv"),
                          Catch::Contains("rule3.csv") && Catch::Contains("more than once") &&
                              Catch::Contains("fields 1 and 2"));
    }
    SECTION("empty text has no header and is refused") {
        CHECK_THROWS_WITH(parse_csv("", "empty.csv"), Catch::Contains("empty.csv") && Catch::Contains("header"));
    }
}

TEST_CASE("RFC 4180 section 2 rule 4: spaces are part of a field and no comma follows the last field",
          "[csv][rfc4180]") {
    const CsvTable t = parse_csv("a,b\r\n x , y \r\n", "rule4.csv");
    CHECK(t.rows == Rows{{" x ", " y "}});
    // A trailing comma makes one more (empty) field, so the count no longer matches the header.
    CHECK_THROWS_AS(parse_csv("a,b\r\n1,2,\r\n", "rule4.csv"), InputError);
    CHECK(csv_record({" x ", " y "}) == " x , y \r\n");
}

TEST_CASE("RFC 4180 section 2 rule 5: any field may be quoted, but an unquoted field holds no quote",
          "[csv][rfc4180]") {
    // RFC example: "aaa","bbb","ccc" CRLF zzz,yyy,xxx
    const CsvTable t = parse_csv("\"aaa\",\"bbb\",\"ccc\"\r\nzzz,yyy,xxx", "rule5.csv");
    CHECK(t.header == std::vector<std::string>{"aaa", "bbb", "ccc"});
    CHECK(t.rows == Rows{{"zzz", "yyy", "xxx"}});
    CHECK_THROWS_WITH(parse_csv("a,b\r\n1,2\r\n3,x\"y\r\n", "rule5.csv"),
                      Catch::Contains("rule5.csv:3") && Catch::Contains("malformed"));
    // Text after the closing quote is not RFC 4180 either.
    CHECK_THROWS_AS(parse_csv("a,b\r\n\"1\"x,2\r\n", "rule5.csv"), InputError);
}

TEST_CASE("RFC 4180 section 2 rule 6: fields with line breaks, quotes or commas are quoted", "[csv][rfc4180]") {
    // RFC example: "aaa","b CRLF bb","ccc" CRLF zzz,yyy,xxx
    const CsvTable t = parse_csv("\"aaa\",\"b\r\nbb\",\"ccc\"\r\nzzz,yyy,xxx", "rule6.csv");
    CHECK(t.header == std::vector<std::string>{"aaa", "b\r\nbb", "ccc"});
    CHECK(csv_record({"aaa", "b\r\nbb", "ccc"}) == "aaa,\"b\r\nbb\",ccc\r\n");
    CHECK(csv_record({"N60, split"}) == "\"N60, split\"\r\n");
    CHECK(csv_record({"a\rb", "a\nb"}) == "\"a\rb\",\"a\nb\"\r\n");
    SECTION("an unclosed quoted field is refused, naming the line where its record began") {
        CHECK_THROWS_WITH(parse_csv("a,b\r\n1,\"open\r\nstill open", "rule6.csv"),
                          Catch::Contains("rule6.csv:2") && Catch::Contains("not closed"));
    }
    SECTION("line numbers count the line breaks inside quoted fields") {
        CHECK_THROWS_WITH(parse_csv("a,b\r\n1,\"two\r\nlines\"\r\n3,4,5\r\n", "lines.csv"),
                          Catch::Contains("lines.csv:4"));
    }
}

TEST_CASE("RFC 4180 section 2 rule 7: a quote inside a quoted field is doubled", "[csv][rfc4180]") {
    // RFC example: "aaa","b""bb","ccc"
    const CsvTable t = parse_csv("\"aaa\",\"b\"\"bb\",\"ccc\"", "rule7.csv");
    CHECK(t.header == std::vector<std::string>{"aaa", "b\"bb", "ccc"});
    CHECK(csv_record({"aaa", "b\"bb", "ccc"}) == "aaa,\"b\"\"bb\",ccc\r\n");
}

TEST_CASE("A UTF-8 byte order mark before the header is skipped", "[csv]") {
    // U+FEFF encoded in UTF-8 is EF BB BF (The Unicode Standard, ch. 23.8); spreadsheet programs write it
    // at the start of CSV files (common practice).
    const CsvTable t = parse_csv("\xEF\xBB\xBFplot,block\r\n101,1\r\n", "excel.csv");
    CHECK(t.header[0] == "plot");
}

TEST_CASE("Tricky fields survive a round trip through csv_record and parse_csv", "[csv]") {
    const CsvTable t = parse_csv(encode(kTricky), "tricky.csv");
    CHECK(t.header == kTricky[0]);
    CHECK(t.rows == Rows(kTricky.begin() + 1, kTricky.end()));
}

TEST_CASE("Python's csv module writes the same bytes and reads the same fields", "[csv][python]") {
    // Rows sent to Python as JSON; Python's csv.writer (QUOTE_MINIMAL, CRLF) must produce our bytes, and
    // csv.reader must read our bytes back into the same fields.
    Rows rows = kTricky;
    rows.push_back({"", "", ""});
    const std::string ours = encode(rows) + csv_record({""});  // a lone empty field is written as ""
    rows.push_back({""});
    TempFile json_in(nlohmann::json(rows).dump());
    TempFile csv_in(ours);

    const std::string python_wrote = run(
        "/usr/bin/python3 -c 'import csv, json, sys; "
        "sys.stdout.reconfigure(newline=\"\", encoding=\"utf-8\"); "
        "w = csv.writer(sys.stdout, quoting=csv.QUOTE_MINIMAL, lineterminator=\"\\r\\n\"); "
        "w.writerows(json.load(open(sys.argv[1], encoding=\"utf-8\")))' " + json_in.path);
    CHECK(python_wrote == ours);

    const std::string python_read = run(
        "/usr/bin/python3 -c 'import csv, json, sys; "
        "sys.stdout.reconfigure(encoding=\"utf-8\"); print(json.dumps(list(csv.reader(open(sys.argv[1], newline=\"\", encoding=\"utf-8\")))))' " +
        csv_in.path);
    CHECK(nlohmann::json::parse(python_read).get<Rows>() == rows);
}
