// Audit log rows (audit_log.hpp). The chain's arithmetic is core's (audit_chain.hpp); this file only reads
// the last link and appends, inside the caller's transaction, so an entry exists exactly when what it
// records was committed.
#include "storage/audit_log.hpp"

#include "storage/sqlite_statement.hpp"
#include "storage/store.hpp"

namespace pw {

void append_audit(sqlite3* db, const std::string& recorded_utc, const std::string& action, const std::string& detail) {
    AuditEntry e;
    e.prev_sha256 = kAuditGenesis;
    {
        sql::Statement last(db, "SELECT id, sha256 FROM audit_log ORDER BY id DESC LIMIT 1");
        if (last.step()) {
            e.id = last.int64(0);
            e.prev_sha256 = last.text(1);
        }
    }
    e.id += 1;
    e.recorded_utc = recorded_utc;
    e.action = action;
    e.detail = detail;
    e.sha256 = audit_link_hash(e.prev_sha256, e);
    sql::Statement ins(db,
                       "INSERT INTO audit_log (id, recorded_utc, action, detail, prev_sha256, sha256) "
                       "VALUES (?1, ?2, ?3, ?4, ?5, ?6)");
    ins.bind(1, e.id).bind(2, e.recorded_utc).bind(3, e.action).bind(4, e.detail).bind(5, e.prev_sha256).bind(6, e.sha256);
    ins.run();
}

std::vector<AuditEntry> audit_entries(const Store& store) {
    sql::Statement st(store.handle(),
                      "SELECT id, recorded_utc, action, detail, prev_sha256, sha256 FROM audit_log ORDER BY id");
    std::vector<AuditEntry> out;
    while (st.step()) out.push_back({st.int64(0), st.text(1), st.text(2), st.text(3), st.text(4), st.text(5)});
    return out;
}

AuditCheck check_audit_log(const Store& store) { return verify_audit_chain(audit_entries(store)); }

}  // namespace pw
