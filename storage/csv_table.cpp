// RFC 4180 CSV through libcsv (csv_table.hpp).
//
// Reading: libcsv in strict mode (CSV_STRICT: a quote inside an unquoted field, or text after a closing
// quote, is an error; CSV_STRICT_FINI: an unterminated quoted field at the end is an error). libcsv trims
// spaces and tabs around unquoted fields by default; RFC 4180 section 2 rule 4 says spaces are part of a
// field, so the space test is replaced by one that accepts nothing. Blank lines are skipped (libcsv's
// default; a record of one empty field is written as "" for this reason, as Python's csv module does).
// A UTF-8 byte order mark at the start, as spreadsheet programs write, is skipped.
// Line numbers in messages are 1-based and count LF bytes (a quoted line break starts a new line).
//
// Writing: a field is quoted only when it holds a comma, a double quote, CR or LF (RFC 4180 section 2
// rule 6), quotes doubled inside (rule 7) by libcsv's csv_write; records end with CRLF (rule 1).
#include "storage/csv_table.hpp"

#include <algorithm>

#include <csv.h>

#include <memory>

#include "core/error.hpp"

namespace pw {
namespace {

int no_space(unsigned char) { return 0; }

struct ParseState {
    const std::string* source = nullptr;
    CsvTable table;
    std::vector<std::string> record;
    bool have_header = false;
    int line = 1;               // line of the byte being fed
    int record_line = 0;        // line where the current record began (0: between records)
    std::string error;          // set by a callback; C++ exceptions must not cross libcsv's C frames
};

void on_field(void* data, std::size_t len, void* st_) {
    auto* st = static_cast<ParseState*>(st_);
    st->record.emplace_back(data ? static_cast<const char*>(data) : "", data ? len : 0);
}

void on_record(int, void* st_) {
    auto* st = static_cast<ParseState*>(st_);
    const int line = st->record_line ? st->record_line : st->line;
    st->record_line = 0;
    if (!st->error.empty()) return;
    if (!st->have_header) {
        st->table.header = std::move(st->record);
        st->have_header = true;
    } else {
        if (st->record.size() != st->table.header.size())
            st->error = *st->source + ":" + std::to_string(line) + ": record has " +
                        std::to_string(st->record.size()) + " fields, the header has " +
                        std::to_string(st->table.header.size()) +
                        " (every record must have the same number of fields, RFC 4180 section 2 rule 4)";
        else
            st->table.rows.push_back(std::move(st->record));
    }
    st->record.clear();
}

struct ParserCloser {
    void operator()(csv_parser* p) const {
        csv_free(p);
        delete p;
    }
};

}  // namespace

std::size_t CsvTable::column(const std::string& name, const std::string& source) const {
    const auto found = std::find(header.begin(), header.end(), name);
    if (found != header.end()) {
        // RFC 4180 lets a header repeat a name; then the name does not say which column is meant.
        const auto again = std::find(found + 1, header.end(), name);
        if (again != header.end())
            throw InputError(source + ": the header names column '" + name + "' more than once (fields " +
                             std::to_string(found - header.begin() + 1) + " and " +
                             std::to_string(again - header.begin() + 1) + "); give each column its own name");
        return static_cast<std::size_t>(found - header.begin());
    }
    std::string present;
    for (const std::string& h : header) present += (present.empty() ? "" : ", ") + h;
    throw InputError(source + ": no column named '" + name + "' (columns present: " + present + ")");
}

CsvTable parse_csv(const std::string& text, const std::string& source) {
    std::unique_ptr<csv_parser, ParserCloser> parser(new csv_parser);
    if (csv_init(parser.get(), CSV_STRICT | CSV_STRICT_FINI) != 0) {
        delete parser.release();
        throw InputError(source + ": cannot set up the CSV reader (out of memory)");
    }
    csv_set_space_func(parser.get(), no_space);

    ParseState st;
    st.source = &source;
    std::size_t start = 0;
    if (text.compare(0, 3, "\xEF\xBB\xBF") == 0) start = 3;

    // Fed one byte at a time so that the line of every byte, and of every record's first byte, is known.
    for (std::size_t i = start; i < text.size(); ++i) {
        const char c = text[i];
        if (st.record_line == 0 && c != '\r' && c != '\n') st.record_line = st.line;
        if (csv_parse(parser.get(), &text[i], 1, on_field, on_record, &st) != 1)
            throw InputError(source + ":" + std::to_string(st.line) + ": malformed CSV record (" +
                             csv_strerror(csv_error(parser.get())) +
                             "): a double quote may only open a field, close it, or be doubled inside a "
                             "quoted field (RFC 4180 section 2 rules 5 and 7)");
        if (!st.error.empty()) throw InputError(st.error);
        if (c == '\n') ++st.line;
    }
    if (csv_fini(parser.get(), on_field, on_record, &st) != 0)
        throw InputError(source + ":" + std::to_string(st.record_line ? st.record_line : st.line) +
                         ": malformed CSV record: a quoted field is not closed before the end of the text");
    if (!st.error.empty()) throw InputError(st.error);
    if (!st.have_header) throw InputError(source + ": empty: expected a header line naming the columns");
    return std::move(st.table);
}

std::string csv_record(const std::vector<std::string>& fields) {
    std::string out;
    for (std::size_t i = 0; i < fields.size(); ++i) {
        if (i) out += ',';
        const std::string& f = fields[i];
        if (f.find_first_of(",\"\r\n") == std::string::npos && !(fields.size() == 1 && f.empty())) {
            out += f;
            continue;
        }
        // csv_write returns the size it needs; called first with no room to learn it.
        const std::size_t need = csv_write(nullptr, 0, f.data(), f.size());
        std::string quoted(need, '\0');
        csv_write(quoted.data(), quoted.size(), f.data(), f.size());
        out += quoted;
    }
    out += "\r\n";
    return out;
}

}  // namespace pw
