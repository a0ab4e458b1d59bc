// The audit log's hash chain: every entry's SHA-256 covers the previous entry's hash and the entry's own
// canonical text, so editing, removing or reordering any entry breaks every link after it (the linking of
// a hash chain as in RFC 6962 §2.1's Merkle audit paths, in its simplest, linear form).
//
// Canonical text of an entry (format kAuditFormat, byte for byte in docs/station.md):
//   "plotwright-audit/1\n" id "\n" recorded_utc "\n" action "\n" detail "\n"
// with id in plain decimal, detail the entry's JSON text exactly as stored. Link hash:
//   sha256 = SHA-256(prev_sha256 "\n" canonical text), lower-case hexadecimal,
// prev_sha256 of the first entry being 64 zeros. Pure: the store reads and writes the rows.
#pragma once
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

namespace pw {

inline constexpr const char* kAuditFormat = "plotwright-audit/1";
inline constexpr const char* kAuditGenesis = "0000000000000000000000000000000000000000000000000000000000000000";

struct AuditEntry {
    std::int64_t id = 0;
    std::string recorded_utc;
    std::string action;        // provision, import, export, resolve, correct
    std::string detail;        // JSON object text
    std::string prev_sha256;
    std::string sha256;
};

std::string audit_canonical_text(const AuditEntry& e);
// The hash an entry with this content must carry after `prev_sha256`.
std::string audit_link_hash(const std::string& prev_sha256, const AuditEntry& e);

struct AuditCheck {
    std::size_t entries = 0;
    std::optional<std::int64_t> first_broken;   // id of the first entry whose link does not hold
    std::string message;                        // one sentence: intact, or what is wrong with which entry
    bool ok() const { return !first_broken; }
};

// Walks the entries in id order (as given): each must name the previous entry's hash (the genesis for the
// first), carry the hash of its own content, and have an id one above the previous.
AuditCheck verify_audit_chain(const std::vector<AuditEntry>& entries);

}  // namespace pw
