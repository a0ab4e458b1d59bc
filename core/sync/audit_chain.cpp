// Audit log hash chain (audit_chain.hpp; the canonical text in docs/station.md).
#include "core/sync/audit_chain.hpp"

#include <fmt/format.h>

#include "core/design/certificate.hpp"  // sha256_hex: FIPS 180-4 SHA-256 by GNU Nettle

namespace pw {

std::string audit_canonical_text(const AuditEntry& e) {
    return fmt::format("{}\n{}\n{}\n{}\n{}\n", kAuditFormat, e.id, e.recorded_utc, e.action, e.detail);
}

std::string audit_link_hash(const std::string& prev_sha256, const AuditEntry& e) {
    return sha256_hex(prev_sha256 + "\n" + audit_canonical_text(e));
}

AuditCheck verify_audit_chain(const std::vector<AuditEntry>& entries) {
    AuditCheck c;
    c.entries = entries.size();
    std::string prev = kAuditGenesis;
    std::int64_t prev_id = 0;
    for (const AuditEntry& e : entries) {
        auto broken = [&](const std::string& why) {
            c.first_broken = e.id;
            c.message = fmt::format("audit log broken at entry {} ({} {}): {}", e.id, e.action, e.recorded_utc, why);
        };
        if (e.id != prev_id + 1)
            broken(fmt::format("its number follows entry {} (an entry was removed or renumbered)", prev_id));
        else if (e.prev_sha256 != prev)
            broken(fmt::format("it names {} as the previous hash, but the previous entry's hash is {} (an entry "
                               "before it was removed or changed)",
                               e.prev_sha256, prev));
        else if (const std::string h = audit_link_hash(prev, e); h != e.sha256)
            broken(fmt::format("its content hashes to {}, the stored hash is {} (the entry was edited)", h, e.sha256));
        if (c.first_broken) return c;
        prev = e.sha256;
        prev_id = e.id;
    }
    c.message = fmt::format("audit log intact: {} entries, every link holds", entries.size());
    return c;
}

}  // namespace pw
