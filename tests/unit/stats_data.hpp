// Reading the reference data of tests/data/stats (R's and NIST's values and the datasets they came from; the
// sources are in tests/data/stats/README.md): a file's text, a JSON file, and a CSV file's columns as text
// or numbers ("" and R's "NA" read as missing, NaN). Shared by the analysis suites.
#pragma once
#include <catch2/catch.hpp>
#include <nlohmann/json.hpp>

#include <cmath>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "storage/csv_table.hpp"

namespace pw_test {

inline std::string data_path(const std::string& name) { return std::string(PW_TEST_DATA_DIR) + "/stats/" + name; }

inline std::string read_text(const std::string& name) {
    std::ifstream in(data_path(name), std::ios::binary);
    REQUIRE(in.good());
    std::ostringstream ss;
    ss << in.rdbuf();
    return ss.str();
}

inline nlohmann::json read_json(const std::string& name) { return nlohmann::json::parse(read_text(name)); }

struct Csv {
    pw::CsvTable table;
    std::string name;
    std::vector<std::string> col(const std::string& c) const {
        const std::size_t k = table.column(c, name);
        std::vector<std::string> out;
        for (const auto& r : table.rows) out.push_back(r[k]);
        return out;
    }
    std::vector<double> num(const std::string& c) const {
        std::vector<double> out;
        for (const auto& s : col(c)) out.push_back(s.empty() || s == "NA" ? std::nan("") : std::stod(s));
        return out;
    }
};

inline Csv read_csv(const std::string& name) { return {pw::parse_csv(read_text(name), name), name}; }

}  // namespace pw_test
