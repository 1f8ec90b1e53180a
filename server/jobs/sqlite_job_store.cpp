#include "server/jobs/sqlite_job_store.h"

#include <sqlite3.h>

#include <chrono>
#include <cstdio>
#include <random>

namespace foothold {
namespace {

constexpr const char* kSchema = R"SQL(
CREATE TABLE IF NOT EXISTS batches (
  id TEXT PRIMARY KEY,
  created_ms INTEGER NOT NULL);
CREATE TABLE IF NOT EXISTS jobs (
  seq INTEGER PRIMARY KEY AUTOINCREMENT,
  id TEXT NOT NULL UNIQUE,
  batch_id TEXT NOT NULL DEFAULT '',
  label TEXT NOT NULL DEFAULT '',
  state TEXT NOT NULL,
  created_ms INTEGER NOT NULL,
  started_ms INTEGER NOT NULL DEFAULT 0,
  finished_ms INTEGER NOT NULL DEFAULT 0,
  request TEXT NOT NULL,
  result TEXT NOT NULL DEFAULT '',
  error TEXT NOT NULL DEFAULT '',
  starts_finished INTEGER NOT NULL DEFAULT 0,
  starts_planned INTEGER NOT NULL DEFAULT 0,
  best_rss REAL NOT NULL DEFAULT 0,
  attempts INTEGER NOT NULL DEFAULT 0,
  cancel_requested INTEGER NOT NULL DEFAULT 0,
  worker TEXT NOT NULL DEFAULT '');
CREATE INDEX IF NOT EXISTS jobs_state ON jobs(state, seq);
CREATE INDEX IF NOT EXISTS jobs_batch ON jobs(batch_id, seq);
)SQL";

constexpr const char* kJobColumns =
    "seq, id, batch_id, label, state, created_ms, started_ms, finished_ms, request, result, "
    "error, starts_finished, starts_planned, best_rss, attempts, cancel_requested";

// A prepared statement that finalises itself.
class Statement {
 public:
  Statement(sqlite3* db, const std::string& sql) : db_(db) {
    if (sqlite3_prepare_v2(db, sql.c_str(), -1, &stmt_, nullptr) != SQLITE_OK) stmt_ = nullptr;
  }
  ~Statement() { sqlite3_finalize(stmt_); }
  bool ok(std::string* error) const {
    if (stmt_) return true;
    *error = std::string("job store: ") + sqlite3_errmsg(db_);
    return false;
  }
  void Bind(int i, const std::string& text) {
    sqlite3_bind_text(stmt_, i, text.c_str(), static_cast<int>(text.size()), SQLITE_TRANSIENT);
  }
  void Bind(int i, std::int64_t value) { sqlite3_bind_int64(stmt_, i, value); }
  void BindDouble(int i, double value) { sqlite3_bind_double(stmt_, i, value); }
  // SQLITE_ROW, SQLITE_DONE or an error code.
  int Step() { return sqlite3_step(stmt_); }
  std::string Text(int i) {
    const unsigned char* text = sqlite3_column_text(stmt_, i);
    return text ? std::string(reinterpret_cast<const char*>(text),
                              static_cast<size_t>(sqlite3_column_bytes(stmt_, i)))
                : std::string();
  }
  std::int64_t Int(int i) { return sqlite3_column_int64(stmt_, i); }
  double Double(int i) { return sqlite3_column_double(stmt_, i); }
  void Reset() {
    sqlite3_reset(stmt_);
    sqlite3_clear_bindings(stmt_);
  }
  bool Done(std::string* error) {
    const int code = Step();
    if (code == SQLITE_DONE || code == SQLITE_ROW) return true;
    *error = std::string("job store: ") + sqlite3_errmsg(db_);
    return false;
  }

 private:
  sqlite3* db_;
  sqlite3_stmt* stmt_ = nullptr;
};

JobRecord ReadJob(Statement& row, std::int64_t* seq, bool with_documents) {
  JobRecord job;
  *seq = row.Int(0);
  job.id = row.Text(1);
  job.batch_id = row.Text(2);
  job.label = row.Text(3);
  JobStateFromString(row.Text(4), &job.state);
  job.created_ms = row.Int(5);
  job.started_ms = row.Int(6);
  job.finished_ms = row.Int(7);
  if (with_documents) {
    job.request_json = row.Text(8);
    job.result_json = row.Text(9);
  }
  job.error = row.Text(10);
  job.progress.starts_finished = static_cast<int>(row.Int(11));
  job.progress.starts_planned = static_cast<int>(row.Int(12));
  job.progress.best_rss = row.Double(13);
  job.attempts = static_cast<int>(row.Int(14));
  job.cancel_requested = row.Int(15) != 0;
  return job;
}

}  // namespace

std::unique_ptr<SqliteJobStore> SqliteJobStore::Open(const std::string& path, std::string* error) {
  sqlite3* db = nullptr;
  if (sqlite3_open_v2(path.c_str(), &db,
                      SQLITE_OPEN_READWRITE | SQLITE_OPEN_CREATE | SQLITE_OPEN_FULLMUTEX,
                      nullptr) != SQLITE_OK) {
    *error = "store '" + path + "': " + (db ? sqlite3_errmsg(db) : "cannot open");
    sqlite3_close(db);
    return nullptr;
  }
  std::unique_ptr<SqliteJobStore> store(new SqliteJobStore(db));
  sqlite3_busy_timeout(db, 5000);
  std::string exec_error;
  if (!store->Exec("PRAGMA journal_mode=WAL; PRAGMA synchronous=FULL;", &exec_error) ||
      !store->Exec(kSchema, &exec_error)) {
    *error = "store '" + path + "': " + exec_error;
    return nullptr;
  }
  std::random_device device;
  store->id_state_ =
      (static_cast<std::uint64_t>(device()) << 32) ^ device() ^ static_cast<std::uint64_t>(NowMs());
  return store;
}

SqliteJobStore::~SqliteJobStore() { sqlite3_close(db_); }

bool SqliteJobStore::Exec(const std::string& sql, std::string* error) {
  char* message = nullptr;
  if (sqlite3_exec(db_, sql.c_str(), nullptr, nullptr, &message) == SQLITE_OK) return true;
  *error = std::string("job store: ") + (message ? message : sqlite3_errmsg(db_));
  sqlite3_free(message);
  return false;
}

// Ids are 16 hex digits from splitmix64 over a random seed: unguessable enough for a
// loopback service, unique in practice, and short in URLs.
std::string SqliteJobStore::NewId(const char* prefix) {
  std::uint64_t z = (id_state_ += 0x9E3779B97F4A7C15ull);
  z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9ull;
  z = (z ^ (z >> 27)) * 0x94D049BB133111EBull;
  z ^= z >> 31;
  char text[40];
  std::snprintf(text, sizeof(text), "%s%016llx", prefix, static_cast<unsigned long long>(z));
  return text;
}

bool SqliteJobStore::InsertJobs(bool as_batch, const std::vector<NewJob>& jobs, int max_queued,
                                std::string* batch_id_out, std::vector<std::string>* ids,
                                bool* queue_full, std::string* error) {
  std::lock_guard<std::mutex> lock(mutex_);
  *queue_full = false;
  ids->clear();
  if (!Exec("BEGIN IMMEDIATE", error)) return false;
  auto rollback = [&] {
    std::string ignored;
    Exec("ROLLBACK", &ignored);
    return false;
  };
  {
    Statement count(db_, "SELECT COUNT(*) FROM jobs WHERE state = 'queued'");
    if (!count.ok(error) || count.Step() != SQLITE_ROW) return rollback();
    if (count.Int(0) + static_cast<std::int64_t>(jobs.size()) > max_queued) {
      *queue_full = true;
      return rollback();
    }
  }
  const std::int64_t now = NowMs();
  const std::string batch_id = as_batch ? NewId("b") : std::string();
  if (batch_id_out) *batch_id_out = batch_id;
  if (as_batch) {
    Statement batch(db_, "INSERT INTO batches(id, created_ms) VALUES (?, ?)");
    if (!batch.ok(error)) return rollback();
    batch.Bind(1, batch_id);
    batch.Bind(2, now);
    if (!batch.Done(error)) return rollback();
  }
  Statement insert(db_,
                   "INSERT INTO jobs(id, batch_id, label, state, created_ms, request) "
                   "VALUES (?, ?, ?, 'queued', ?, ?)");
  if (!insert.ok(error)) return rollback();
  for (const NewJob& job : jobs) {
    const std::string id = NewId("f");
    insert.Bind(1, id);
    insert.Bind(2, batch_id);
    insert.Bind(3, job.label);
    insert.Bind(4, now);
    insert.Bind(5, job.request_json);
    if (!insert.Done(error)) return rollback();
    insert.Reset();
    ids->push_back(id);
  }
  return Exec("COMMIT", error) || rollback();
}

bool SqliteJobStore::ClaimNextJob(const std::string& worker, JobRecord* out, bool* found,
                                  std::string* error) {
  std::lock_guard<std::mutex> lock(mutex_);
  *found = false;
  Statement claim(db_, std::string("UPDATE jobs SET state = 'running', started_ms = ?, "
                                   "attempts = attempts + 1, worker = ? WHERE seq = (SELECT seq "
                                   "FROM jobs WHERE state = 'queued' ORDER BY seq LIMIT 1) "
                                   "RETURNING ") +
                           kJobColumns);
  if (!claim.ok(error)) return false;
  claim.Bind(1, NowMs());
  claim.Bind(2, worker);
  const int code = claim.Step();
  if (code == SQLITE_ROW) {
    std::int64_t seq = 0;
    *out = ReadJob(claim, &seq, true);
    *found = true;
    claim.Step();
    return true;
  }
  if (code == SQLITE_DONE) return true;
  *error = std::string("job store: ") + sqlite3_errmsg(db_);
  return false;
}

bool SqliteJobStore::UpdateProgress(const std::string& id, const JobProgress& progress,
                                    std::string* error) {
  std::lock_guard<std::mutex> lock(mutex_);
  Statement update(db_,
                   "UPDATE jobs SET starts_finished = ?, starts_planned = ?, best_rss = ? "
                   "WHERE id = ? AND state = 'running'");
  if (!update.ok(error)) return false;
  update.Bind(1, static_cast<std::int64_t>(progress.starts_finished));
  update.Bind(2, static_cast<std::int64_t>(progress.starts_planned));
  update.BindDouble(3, progress.best_rss);
  update.Bind(4, id);
  return update.Done(error);
}

bool SqliteJobStore::FinishJob(const std::string& id, JobState state,
                               const std::string& result_json, const std::string& job_error,
                               std::string* error) {
  std::lock_guard<std::mutex> lock(mutex_);
  Statement update(db_,
                   "UPDATE jobs SET state = ?, result = ?, error = ?, finished_ms = ? "
                   "WHERE id = ? AND state = 'running'");
  if (!update.ok(error)) return false;
  update.Bind(1, std::string(ToString(state)));
  update.Bind(2, result_json);
  update.Bind(3, job_error);
  update.Bind(4, NowMs());
  update.Bind(5, id);
  return update.Done(error);
}

bool SqliteJobStore::RequeueJob(const std::string& id, std::string* error) {
  std::lock_guard<std::mutex> lock(mutex_);
  Statement update(db_,
                   "UPDATE jobs SET state = 'queued', started_ms = 0, starts_finished = 0, "
                   "worker = '' WHERE id = ? AND state = 'running'");
  if (!update.ok(error)) return false;
  update.Bind(1, id);
  return update.Done(error);
}

bool SqliteJobStore::CancelJob(const std::string& id, JobState* previous, bool* found,
                               std::string* error) {
  std::lock_guard<std::mutex> lock(mutex_);
  *found = false;
  if (!Exec("BEGIN IMMEDIATE", error)) return false;
  std::string ignored;
  Statement read(db_, "SELECT state FROM jobs WHERE id = ?");
  if (!read.ok(error)) return Exec("ROLLBACK", &ignored) && false;
  read.Bind(1, id);
  if (read.Step() != SQLITE_ROW) return Exec("COMMIT", error);
  *found = true;
  JobStateFromString(read.Text(0), previous);
  const char* sql = nullptr;
  if (*previous == JobState::kQueued) {
    sql = "UPDATE jobs SET state = 'cancelled', finished_ms = ? WHERE id = ?";
  } else if (*previous == JobState::kRunning) {
    sql = "UPDATE jobs SET cancel_requested = 1 WHERE ? > 0 AND id = ?";
  }
  if (sql) {
    Statement update(db_, sql);
    if (!update.ok(error)) return Exec("ROLLBACK", &ignored) && false;
    update.Bind(1, NowMs());
    update.Bind(2, id);
    if (!update.Done(error)) return Exec("ROLLBACK", &ignored) && false;
  }
  return Exec("COMMIT", error);
}

bool SqliteJobStore::GetJob(const std::string& id, JobRecord* out, bool* found,
                            std::string* error) {
  std::lock_guard<std::mutex> lock(mutex_);
  *found = false;
  Statement read(db_, std::string("SELECT ") + kJobColumns + " FROM jobs WHERE id = ?");
  if (!read.ok(error)) return false;
  read.Bind(1, id);
  if (read.Step() == SQLITE_ROW) {
    std::int64_t seq = 0;
    *out = ReadJob(read, &seq, true);
    *found = true;
  }
  return true;
}

bool SqliteJobStore::ListJobs(const JobFilter& filter, JobPage* out, std::string* error) {
  std::lock_guard<std::mutex> lock(mutex_);
  std::string sql = std::string("SELECT ") + kJobColumns + " FROM jobs WHERE 1 = 1";
  if (filter.has_state) sql += " AND state = ?1";
  if (!filter.label.empty()) sql += " AND label = ?2";
  if (filter.created_since_ms > 0) sql += " AND created_ms >= ?3";
  if (filter.cursor > 0) sql += " AND seq < ?4";
  sql += " ORDER BY seq DESC LIMIT ?5";
  Statement read(db_, sql);
  if (!read.ok(error)) return false;
  if (filter.has_state) read.Bind(1, std::string(ToString(filter.state)));
  if (!filter.label.empty()) read.Bind(2, filter.label);
  if (filter.created_since_ms > 0) read.Bind(3, filter.created_since_ms);
  if (filter.cursor > 0) read.Bind(4, filter.cursor);
  read.Bind(5, static_cast<std::int64_t>(filter.limit) + 1);
  out->jobs.clear();
  out->next_cursor = 0;
  std::int64_t last_seq = 0;
  int code;
  while ((code = read.Step()) == SQLITE_ROW) {
    if (static_cast<int>(out->jobs.size()) == filter.limit) {
      out->next_cursor = last_seq;
      break;
    }
    out->jobs.push_back(ReadJob(read, &last_seq, false));
  }
  if (code != SQLITE_ROW && code != SQLITE_DONE) {
    *error = std::string("job store: ") + sqlite3_errmsg(db_);
    return false;
  }
  return true;
}

bool SqliteJobStore::GetBatch(const std::string& id, BatchRecord* out, bool* found,
                              std::string* error) {
  std::lock_guard<std::mutex> lock(mutex_);
  *found = false;
  Statement batch(db_, "SELECT created_ms FROM batches WHERE id = ?");
  if (!batch.ok(error)) return false;
  batch.Bind(1, id);
  if (batch.Step() != SQLITE_ROW) return true;
  *found = true;
  out->id = id;
  out->created_ms = batch.Int(0);
  out->jobs.clear();
  Statement read(
      db_, std::string("SELECT ") + kJobColumns + " FROM jobs WHERE batch_id = ? ORDER BY seq");
  if (!read.ok(error)) return false;
  read.Bind(1, id);
  std::int64_t seq = 0;
  while (read.Step() == SQLITE_ROW) out->jobs.push_back(ReadJob(read, &seq, false));
  return true;
}

bool SqliteJobStore::RequeueAllRunning(int* count, std::string* error) {
  std::lock_guard<std::mutex> lock(mutex_);
  if (!Exec("UPDATE jobs SET state = 'queued', started_ms = 0, starts_finished = 0, "
            "worker = '' WHERE state = 'running'",
            error)) {
    return false;
  }
  *count = sqlite3_changes(db_);
  return true;
}

bool SqliteJobStore::PurgeFinishedBefore(std::int64_t before_ms, int* count, std::string* error) {
  std::lock_guard<std::mutex> lock(mutex_);
  Statement purge(db_,
                  "DELETE FROM jobs WHERE state IN ('done', 'failed', 'cancelled') AND "
                  "finished_ms < ?");
  if (!purge.ok(error)) return false;
  purge.Bind(1, before_ms);
  if (!purge.Done(error)) return false;
  *count = sqlite3_changes(db_);
  return Exec("DELETE FROM batches WHERE id NOT IN (SELECT batch_id FROM jobs)", error);
}

bool SqliteJobStore::CountByState(std::map<JobState, int>* counts, std::string* error) {
  std::lock_guard<std::mutex> lock(mutex_);
  counts->clear();
  for (JobState state : kAllJobStates) (*counts)[state] = 0;
  Statement read(db_, "SELECT state, COUNT(*) FROM jobs GROUP BY state");
  if (!read.ok(error)) return false;
  while (read.Step() == SQLITE_ROW) {
    JobState state;
    if (JobStateFromString(read.Text(0), &state)) (*counts)[state] = static_cast<int>(read.Int(1));
  }
  return true;
}

bool SqliteJobStore::IsReachable() {
  std::lock_guard<std::mutex> lock(mutex_);
  Statement read(db_, "SELECT 1");
  std::string error;
  return read.ok(&error) && read.Step() == SQLITE_ROW;
}

}  // namespace foothold
