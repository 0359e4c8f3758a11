// Package history keeps every reduced observation and line of a job,
// night after night, with the settings and input hash of the run that
// made them, and remembers which input files were processed (by the
// SHA-256 of their content), so that a nightly run reduces each file once.
//
// The store is embedded SQLite (modernc.org/sqlite, pure Go, one file in
// the job folder, WAL mode) by default, or PostgreSQL (jackc/pgx) given a
// connection string, for an office where several servers share one
// history. Both carry the same schema, applied at Open by versioned
// migrations (migrations.go); the SQL is written once with ? placeholders
// and rewritten to $n for PostgreSQL (dialect.go).
//
// A file's rows and its processed mark are written in one transaction
// (Store.Record): a run killed before the commit leaves nothing of the
// file, and the next run reduces it again; a file whose mark is committed
// is never counted twice, even by two servers at once (the mark is unique
// per job and content hash).
package history
