package history

import (
	"context"
	"crypto/sha256"
	"database/sql"
	"encoding/binary"
	"errors"
	"fmt"
	"net/url"
	"strings"
	"time"

	_ "github.com/jackc/pgx/v5/stdlib" // database/sql driver "pgx"
	_ "modernc.org/sqlite"             // database/sql driver "sqlite"
)

// A Store is an open history: SQLite or PostgreSQL.
type Store struct {
	db   *sql.DB
	d    dialect
	name string // what Open was given, without a password
}

// IsPostgres reports whether where names a PostgreSQL database (a
// postgres:// or postgresql:// URL, or a key=value connection string
// with host= or dbname=) rather than a SQLite file.
func IsPostgres(where string) bool {
	if strings.HasPrefix(where, "postgres://") || strings.HasPrefix(where, "postgresql://") {
		return true
	}
	return strings.Contains(where, "host=") || strings.Contains(where, "dbname=")
}

// Open opens the history at where: a PostgreSQL connection string (see
// IsPostgres), or else the path of a SQLite file, created if missing, in
// WAL mode. It applies the migrations the store lacks.
func Open(ctx context.Context, where string) (*Store, error) {
	s := &Store{name: where}
	var err error
	if IsPostgres(where) {
		s.d = postgresDialect
		s.name = redact(where)
		s.db, err = sql.Open("pgx", where)
	} else {
		s.d = sqliteDialect
		// _txlock=immediate: a writing transaction takes the database's
		// write lock at BEGIN, so two writers wait (busy_timeout) rather
		// than one failing at its first write.
		dsn := "file:" + where + "?_pragma=journal_mode(WAL)&_pragma=busy_timeout(30000)&_pragma=foreign_keys(1)&_pragma=synchronous(NORMAL)&_txlock=immediate"
		s.db, err = sql.Open("sqlite", dsn)
	}
	if err != nil {
		return nil, fmt.Errorf("history %s: %w", s.name, err)
	}
	if err := s.db.PingContext(ctx); err != nil {
		s.db.Close()
		return nil, fmt.Errorf("history %s: %w", s.name, err)
	}
	if s.d.name == "sqlite" {
		var mode string
		if err := s.db.QueryRowContext(ctx, "PRAGMA journal_mode").Scan(&mode); err != nil || mode != "wal" {
			s.db.Close()
			return nil, fmt.Errorf("history %s: WAL mode refused (journal_mode %q): %v", s.name, mode, err)
		}
	}
	if err := s.migrate(ctx); err != nil {
		s.db.Close()
		return nil, fmt.Errorf("history %s: %w", s.name, err)
	}
	return s, nil
}

// redact is a connection string without its password.
func redact(where string) string {
	if u, err := url.Parse(where); err == nil && u.User != nil {
		if _, ok := u.User.Password(); ok {
			u.User = url.UserPassword(u.User.Username(), "xxxxx")
		}
		return u.String()
	}
	if i := strings.Index(where, "password="); i >= 0 {
		j := strings.IndexByte(where[i:], ' ')
		if j < 0 {
			return where[:i] + "password=xxxxx"
		}
		return where[:i] + "password=xxxxx" + where[i+j:]
	}
	return where
}

// Close closes the store.
func (s *Store) Close() error { return s.db.Close() }

// Dialect is "sqlite" or "postgres".
func (s *Store) Dialect() string { return s.d.name }

// String names the store (without a password).
func (s *Store) String() string { return s.d.name + " " + s.name }

// Version is the schema version of the store.
func (s *Store) Version(ctx context.Context) (int, error) {
	var v int
	err := s.db.QueryRowContext(ctx, "SELECT COALESCE(MAX(version), 0) FROM schema_version").Scan(&v)
	return v, err
}

// migrationKey is the advisory lock that keeps two runs from migrating a
// PostgreSQL database at once.
var migrationKey = lockKey("geored history migrations")

// migrate applies the migrations the store lacks, each in a transaction
// with its version row.
func (s *Store) migrate(ctx context.Context) error {
	conn, err := s.db.Conn(ctx)
	if err != nil {
		return err
	}
	defer conn.Close()
	if s.d.name == "postgres" {
		if _, err := conn.ExecContext(ctx, "SELECT pg_advisory_lock($1)", migrationKey); err != nil {
			return err
		}
		defer conn.ExecContext(context.WithoutCancel(ctx), "SELECT pg_advisory_unlock($1)", migrationKey)
	}
	if _, err := conn.ExecContext(ctx, `CREATE TABLE IF NOT EXISTS schema_version (version BIGINT PRIMARY KEY, applied TEXT NOT NULL)`); err != nil {
		return fmt.Errorf("creating schema_version: %w", err)
	}
	for {
		tx, err := conn.BeginTx(ctx, nil)
		if err != nil {
			return err
		}
		var have int
		if err := tx.QueryRowContext(ctx, "SELECT COALESCE(MAX(version), 0) FROM schema_version").Scan(&have); err != nil {
			tx.Rollback()
			return err
		}
		if have > len(migrations) {
			tx.Rollback()
			return fmt.Errorf("schema version %d is newer than this geored knows (%d): use a newer geored", have, len(migrations))
		}
		if have == len(migrations) {
			return tx.Rollback()
		}
		for _, q := range migrations[have] {
			if only, rest, ok := strings.Cut(q, ":"); ok && (only == "sqlite" || only == "postgres") {
				if only != s.d.name {
					continue
				}
				q = rest
			}
			if _, err := tx.ExecContext(ctx, s.d.sql(q)); err != nil {
				tx.Rollback()
				return fmt.Errorf("migration %d: %w", have+1, err)
			}
		}
		if _, err := tx.ExecContext(ctx, s.d.sql("INSERT INTO schema_version (version, applied) VALUES (?, ?)"), have+1, time.Now().UTC().Format(time.RFC3339)); err != nil {
			tx.Rollback()
			return err
		}
		if err := tx.Commit(); err != nil {
			return fmt.Errorf("migration %d: %w", have+1, err)
		}
	}
}

// lockKey is the 64-bit advisory lock key of a name: the first 8 bytes of
// its SHA-256.
func lockKey(name string) int64 {
	h := sha256.Sum256([]byte(name))
	return int64(binary.BigEndian.Uint64(h[:8]))
}

// A HeldError is the refusal of Lock when another session holds it.
type HeldError struct {
	Name   string
	Holder string // the holding session, as the database describes it
}

func (e *HeldError) Error() string {
	return fmt.Sprintf("the job %s is in use by another run (%s): the lock is in the database", e.Name, e.Holder)
}

// A DBLock is an advisory lock held by one database session.
type DBLock struct {
	conn *sql.Conn
	key  int64
}

// Lock takes PostgreSQL's advisory lock keyed by name (the job folder of
// a run), on a session of its own that holds it until Release or until
// the process dies, when the server frees it with the session. It
// returns a *HeldError when another session holds it, unless wait, when
// it waits for it (or for ctx). On SQLite it returns nil, nil: the job
// folder's flock is the lock there.
func (s *Store) Lock(ctx context.Context, name string, wait bool) (*DBLock, error) {
	if s.d.name != "postgres" {
		return nil, nil
	}
	conn, err := s.db.Conn(ctx)
	if err != nil {
		return nil, err
	}
	key := lockKey("geored job " + name)
	for {
		var got bool
		if err := conn.QueryRowContext(ctx, "SELECT pg_try_advisory_lock($1)", key).Scan(&got); err != nil {
			conn.Close()
			return nil, err
		}
		if got {
			return &DBLock{conn: conn, key: key}, nil
		}
		if !wait {
			holder := "a session that has not said who it is"
			var pid int
			var app, addr sql.NullString
			var since sql.NullTime
			err := conn.QueryRowContext(ctx, `SELECT a.pid, a.application_name, host(a.client_addr), a.backend_start
				FROM pg_locks l JOIN pg_stat_activity a ON a.pid = l.pid
				WHERE l.locktype = 'advisory' AND l.granted AND l.classid = $1 AND l.objid = $2 LIMIT 1`,
				uint32(uint64(key)>>32), uint32(uint64(key))).Scan(&pid, &app, &addr, &since)
			if err == nil {
				holder = fmt.Sprintf("server process %d, client %s, connected %s", pid, addr.String, since.Time.UTC().Format(time.RFC3339))
			}
			conn.Close()
			return nil, &HeldError{Name: name, Holder: holder}
		}
		select {
		case <-ctx.Done():
			conn.Close()
			return nil, context.Cause(ctx)
		case <-time.After(200 * time.Millisecond):
		}
	}
}

// Release frees the lock; safe on nil and more than once.
func (l *DBLock) Release() {
	if l == nil || l.conn == nil {
		return
	}
	l.conn.ExecContext(context.Background(), "SELECT pg_advisory_unlock($1)", l.key)
	l.conn.Close()
	l.conn = nil
}

// ErrNoRun is returned by Store methods that need a run begun.
var ErrNoRun = errors.New("history: no run begun")
