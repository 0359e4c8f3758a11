package history

import (
	"context"
	"fmt"
	"math"
	"path/filepath"
	"sync"
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"github.com/geored/geored/io/history/pgtest"
)

// backends opens a fresh store of each kind for a test: SQLite in the
// test's folder, and a database of a throwaway PostgreSQL server.
func backends(t *testing.T, each func(t *testing.T, where string)) {
	t.Run("sqlite", func(t *testing.T) { each(t, filepath.Join(t.TempDir(), "history.db")) })
	t.Run("postgres", func(t *testing.T) { each(t, pgtest.Start(t)) })
}

func open(t *testing.T, where string) *Store {
	t.Helper()
	s, err := Open(context.Background(), where)
	require.NoError(t, err)
	t.Cleanup(func() { s.Close() })
	return s
}

func begin(t *testing.T, s *Store, job, night string) *Run {
	t.Helper()
	r := &Run{Job: job, Night: night, Started: time.Date(2026, 12, 2, 1, 0, 0, 0, time.UTC), Version: "test"}
	require.NoError(t, s.BeginRun(context.Background(), r))
	return r
}

// someRows are n observations and a line of one file, deterministic.
func someRows(n int) ([]Observation, []Line, []Fit) {
	obs := make([]Observation, n)
	for i := range obs {
		obs[i] = Observation{LineNo: i + 2, ObsID: fmt.Sprint(i + 1), From: "A", To: "B", Instrument: "ts-1",
			Slope: 500 + float64(i)*1e-4, Arc: 499.9, Geodesic: 499.9, ResidualMM: 0.1 * float64(i%7-3), SigmaMM: 1.2, W: 0.1, Flagged: i%50 == 0}
	}
	return obs, []Line{{Instrument: "ts-1", From: "A", To: "B", N: n, Geodesic: 499.9, ResidualMM: 0.05, SigmaMM: 0.3}},
		[]Fit{{Instrument: "ts-1", N: 8, ConstantMM: 0.4, ConstantSigmaMM: 0.2, ScalePPM: 1.1, ScaleSigmaPPM: 0.5, Evidence: "enough"}}
}

func TestMigrations(t *testing.T) {
	backends(t, func(t *testing.T, where string) {
		s := open(t, where)
		v, err := s.Version(context.Background())
		require.NoError(t, err)
		require.Equal(t, len(migrations), v, "every migration applied at Open")
		s.Close()
		// Opened again: nothing applied twice.
		s2 := open(t, where)
		v, err = s2.Version(context.Background())
		require.NoError(t, err)
		require.Equal(t, len(migrations), v)
		var rows int
		require.NoError(t, s2.db.QueryRow("SELECT COUNT(*) FROM schema_version").Scan(&rows))
		require.Equal(t, len(migrations), rows, "one row per version")
		// Migration 2 drops the row tables' foreign keys on PostgreSQL
		// alone.
		var fks int
		if s2.Dialect() == "postgres" {
			require.NoError(t, s2.db.QueryRow(`SELECT COUNT(*) FROM information_schema.table_constraints
				WHERE constraint_type = 'FOREIGN KEY' AND table_name IN ('observations', 'lines')`).Scan(&fks))
			require.Zero(t, fks)
		} else {
			require.NoError(t, s2.db.QueryRow(`SELECT COUNT(*) FROM pragma_foreign_key_list('observations')`).Scan(&fks))
			require.Equal(t, 1, fks)
		}
	})
}

// TestMigrationAlertNights: the nights a store held before alert_nights
// are taken as computed, not all computed again by the next run.
func TestMigrationAlertNights(t *testing.T) {
	backends(t, func(t *testing.T, where string) {
		ctx := context.Background()
		all := migrations
		migrations = all[:2]
		s := open(t, where)
		r := begin(t, s, "bridge", "2026-11-30")
		_, err := s.db.ExecContext(ctx, s.d.sql(`INSERT INTO files (job, sha256, name, night, run_id, status, reason, results, input_hash, settings,
			rows_read, rows_reduced, rows_rejected, exit_status) VALUES ('bridge', 'aa', 'a.csv', '2026-11-30', ?, 'reduced', '', '', '', '', 0, 0, 0, 0)`), r.ID)
		migrations = all
		require.NoError(t, err)
		s.Close()
		s = open(t, where)
		due, err := s.AlertsDue(ctx, "bridge")
		require.NoError(t, err)
		require.Empty(t, due)
	})
}
func TestOpenSQLiteIsWAL(t *testing.T) {
	s := open(t, filepath.Join(t.TempDir(), "h.db"))
	var mode string
	require.NoError(t, s.db.QueryRow("PRAGMA journal_mode").Scan(&mode))
	require.Equal(t, "wal", mode)
}

// TestRecordOnce: a file's mark and rows go in together, and a second
// Record of the same content hash writes nothing and returns the mark
// that is there.
func TestRecordOnce(t *testing.T) {
	backends(t, func(t *testing.T, where string) {
		ctx := context.Background()
		s := open(t, where)
		r := begin(t, s, "bridge", "2026-12-01")
		obs, lines, fits := someRows(2500) // more than one statement's worth
		f := File{Job: "bridge", SHA256: "aa", Name: "inbox/mon.csv", Night: r.Night, RunID: r.ID, Status: StatusReduced, Read: 2500, Reduced: 2500}
		ok, err := s.Record(ctx, &f, obs, lines, fits)
		require.NoError(t, err)
		require.True(t, ok)
		got, ok, err := s.Processed(ctx, "bridge", "aa")
		require.NoError(t, err)
		require.True(t, ok)
		require.Equal(t, "inbox/mon.csv", got.Name)

		again := File{Job: "bridge", SHA256: "aa", Name: "inbox/copy.csv", Night: r.Night, RunID: r.ID, Status: StatusReduced}
		ok, err = s.Record(ctx, &again, obs, lines, fits)
		require.NoError(t, err)
		require.False(t, ok, "the same content is recorded once")
		require.Equal(t, "inbox/mon.csv", again.Name, "the mark that is there")
		c, err := s.Count(ctx, "bridge")
		require.NoError(t, err)
		require.Equal(t, Counts{Files: 1, Observations: 2500, Lines: 1, Fits: 1}, c)

		// The same content in another job is that job's own.
		other := File{Job: "tunnel", SHA256: "aa", Name: "x.csv", Night: r.Night, RunID: r.ID, Status: StatusRejected, Reason: "bad"}
		ok, err = s.Record(ctx, &other, nil, nil, nil)
		require.NoError(t, err)
		require.True(t, ok)
	})
}

// TestRecordIsOneTransaction: a Record that fails on its last statement,
// after the mark and every observation and line are written, leaves
// neither mark nor rows. The fit breaks both databases: SQLite stores a
// NaN as NULL, which NOT NULL refuses, and PostgreSQL refuses a NUL byte
// in TEXT.
func TestRecordIsOneTransaction(t *testing.T) {
	backends(t, func(t *testing.T, where string) {
		ctx := context.Background()
		s := open(t, where)
		r := begin(t, s, "bridge", "2026-12-01")
		obs, lines, _ := someRows(1500)
		bad := []Fit{{Instrument: "ts\x00", ConstantMM: math.NaN()}}
		f := File{Job: "bridge", SHA256: "bb", Name: "tue.csv", Night: r.Night, RunID: r.ID, Status: StatusReduced}
		_, err := s.Record(ctx, &f, obs, lines, bad)
		require.Error(t, err)
		_, ok, err := s.Processed(ctx, "bridge", "bb")
		require.NoError(t, err)
		require.False(t, ok, "no mark")
		c, err := s.Count(ctx, "bridge")
		require.NoError(t, err)
		require.Equal(t, Counts{}, c, "no rows")

		// A mark whose run does not exist breaks a foreign key: nothing.
		f2 := File{Job: "bridge", SHA256: "cc", Name: "wed.csv", Night: r.Night, RunID: r.ID + 1000, Status: StatusReduced}
		_, err = s.Record(ctx, &f2, obs, lines, nil)
		require.Error(t, err)
		c, err = s.Count(ctx, "bridge")
		require.NoError(t, err)
		require.Equal(t, Counts{}, c)
	})
}

// TestRecordingStreams: observations added one by one go to the store a
// batch at a time, in the transaction of the mark: before Finish another
// session sees none of them; Finish records the mark as the File is then;
// Abort leaves neither mark nor rows.
func TestRecordingStreams(t *testing.T) {
	backends(t, func(t *testing.T, where string) {
		ctx := context.Background()
		s, other := open(t, where), open(t, where)
		r := begin(t, s, "bridge", "2026-12-01")
		obs, lines, fits := someRows(2*RecordBatch + 7)
		f := File{Job: "bridge", SHA256: "ss", Name: "wed.csv", Night: r.Night, RunID: r.ID, Status: StatusReduced}
		rec, err := s.BeginRecord(ctx, &f)
		require.NoError(t, err)
		for i := range obs {
			require.NoError(t, rec.Add(ctx, &obs[i]))
		}
		require.Len(t, rec.buf, 7, "the full batches are written as they come")
		c, err := other.Count(ctx, "bridge")
		require.NoError(t, err)
		require.Equal(t, Counts{}, c, "nothing seen before the commit")
		f.Read, f.Reduced, f.Exit = len(obs)+2, len(obs), 1
		won, err := rec.Finish(ctx, lines, fits)
		require.NoError(t, err)
		require.True(t, won)
		c, err = other.Count(ctx, "bridge")
		require.NoError(t, err)
		require.Equal(t, Counts{Files: 1, Observations: len(obs), Lines: 1, Fits: 1}, c)
		there, ok, err := other.Processed(ctx, "bridge", "ss")
		require.NoError(t, err)
		require.True(t, ok)
		require.Equal(t, f, there, "the mark as the File was at Finish")

		g := File{Job: "bridge", SHA256: "tt", Name: "thu.csv", Night: r.Night, RunID: r.ID, Status: StatusReduced}
		rec, err = s.BeginRecord(ctx, &g)
		require.NoError(t, err)
		for i := range obs {
			require.NoError(t, rec.Add(ctx, &obs[i]))
		}
		rec.Abort()
		_, ok, err = other.Processed(ctx, "bridge", "tt")
		require.NoError(t, err)
		require.False(t, ok)
		c, err = other.Count(ctx, "bridge")
		require.NoError(t, err)
		require.Equal(t, Counts{Files: 1, Observations: len(obs), Lines: 1, Fits: 1}, c, "an aborted record leaves nothing")
	})
}

// TestRecordConcurrent: two writers of the same content hash at once, on
// one store: one wins, the other finds its mark; rows are not doubled.
func TestRecordConcurrent(t *testing.T) {
	backends(t, func(t *testing.T, where string) {
		ctx := context.Background()
		s1, s2 := open(t, where), open(t, where)
		r := begin(t, s1, "bridge", "2026-12-01")
		obs, lines, fits := someRows(3000)
		var wg sync.WaitGroup
		won := make([]bool, 2)
		errs := make([]error, 2)
		for i, s := range []*Store{s1, s2} {
			wg.Go(func() {
				f := File{Job: "bridge", SHA256: "dd", Name: fmt.Sprintf("server%d.csv", i), Night: r.Night, RunID: r.ID, Status: StatusReduced}
				won[i], errs[i] = s.Record(ctx, &f, obs, lines, fits)
			})
		}
		wg.Wait()
		require.NoError(t, errs[0])
		require.NoError(t, errs[1])
		require.True(t, won[0] != won[1], "exactly one writer records the file: %v", won)
		c, err := s1.Count(ctx, "bridge")
		require.NoError(t, err)
		require.Equal(t, Counts{Files: 1, Observations: 3000, Lines: 1, Fits: 1}, c)
	})
}

func TestSeries(t *testing.T) {
	backends(t, func(t *testing.T, where string) {
		ctx := context.Background()
		s := open(t, where)
		for i, night := range []string{"2026-11-30", "2026-12-01"} {
			r := begin(t, s, "bridge", night)
			f := File{Job: "bridge", SHA256: night, Name: night + ".csv", Night: night, RunID: r.ID, Status: StatusReduced}
			lines := []Line{
				{Instrument: "ts-1", From: "A", To: "B", N: 2, Geodesic: 500, ResidualMM: float64(i), SigmaMM: 1},
				{Instrument: "ts-1", From: "C", To: "A", N: 2, Geodesic: 800, ResidualMM: -float64(i), SigmaMM: 1},
			}
			if i == 1 { // observed the other way round
				lines[0].From, lines[0].To = "B", "A"
			}
			_, err := s.Record(ctx, &f, nil, lines, []Fit{{Instrument: "ts-1", N: 2, ConstantMM: float64(i)}})
			require.NoError(t, err)
		}
		ab, err := s.LineSeries(ctx, "bridge", "A", "B")
		require.NoError(t, err)
		require.Len(t, ab, 2, "either direction")
		require.Equal(t, []float64{0, 1}, []float64{ab[0].ResidualMM, ab[1].ResidualMM})
		m, err := s.MarkSeries(ctx, "bridge", "A")
		require.NoError(t, err)
		require.Len(t, m, 4)
		fs, err := s.InstrumentSeries(ctx, "bridge", "ts-1")
		require.NoError(t, err)
		require.Len(t, fs, 2)
		require.Equal(t, "2026-12-01", fs[1].Night)
		require.Equal(t, 1.0, fs[1].ConstantMM)

		due, err := s.AlertsDue(ctx, "bridge")
		require.NoError(t, err)
		require.Equal(t, []string{"2026-11-30", "2026-12-01"}, due, "both nights' alerts are due")
		moved := Alert{Night: "2026-12-01", Kind: "mark-moved", Subject: "A", Message: "moved"}
		require.NoError(t, s.RecordAlerts(ctx, "bridge", "2026-12-01", 1, []Alert{moved}))
		again := moved
		again.Message = "again"
		require.NoError(t, s.RecordAlerts(ctx, "bridge", "2026-12-01", 1, []Alert{again}))
		al, err := s.Alerts(ctx, "bridge")
		require.NoError(t, err)
		require.Equal(t, []Alert{moved}, al, "an alert is recorded once")
		require.Error(t, s.RecordAlerts(ctx, "bridge", "2026-11-30", 1, []Alert{moved}), "an alert of another night")
		due, err = s.AlertsDue(ctx, "bridge")
		require.NoError(t, err)
		require.Equal(t, []string{"2026-11-30"}, due, "2026-12-01's computed; the failed record left 2026-11-30 due")

		// A file recorded for a night whose alerts are computed makes
		// them due again, in the transaction of its mark.
		r := begin(t, s, "bridge", "2026-12-01")
		f := File{Job: "bridge", SHA256: "late", Name: "late.csv", Night: "2026-12-01", RunID: r.ID, Status: StatusReduced}
		_, err = s.Record(ctx, &f, nil, nil, nil)
		require.NoError(t, err)
		due, err = s.AlertsDue(ctx, "bridge")
		require.NoError(t, err)
		require.Equal(t, []string{"2026-11-30", "2026-12-01"}, due)
	})
}

// TestLockPostgres: the advisory lock keyed by the job folder refuses a
// second session, naming the holder, and is free once released.
func TestLockPostgres(t *testing.T) {
	where := pgtest.Start(t)
	ctx := context.Background()
	s1, s2 := open(t, where), open(t, where)
	l1, err := s1.Lock(ctx, "host:/srv/jobs/bridge", false)
	require.NoError(t, err)
	require.NotNil(t, l1)
	_, err = s2.Lock(ctx, "host:/srv/jobs/bridge", false)
	var held *HeldError
	require.ErrorAs(t, err, &held)
	require.Contains(t, err.Error(), "server process")
	other, err := s2.Lock(ctx, "host:/srv/jobs/tunnel", false)
	require.NoError(t, err, "another job folder's lock is its own")
	other.Release()
	l1.Release()
	l2, err := s2.Lock(ctx, "host:/srv/jobs/bridge", false)
	require.NoError(t, err)
	l2.Release()
}

func TestDialect(t *testing.T) {
	require.Equal(t, "INSERT INTO t (a, b) VALUES ($1, $2)", postgresDialect.sql("INSERT INTO t (a, b) VALUES (?, ?)"))
	require.Equal(t, "INSERT INTO t (a, b) VALUES (?, ?)", sqliteDialect.sql("INSERT INTO t (a, b) VALUES (?, ?)"))
	require.Equal(t, "CREATE TABLE x (id INTEGER PRIMARY KEY)", sqliteDialect.sql("CREATE TABLE x (id {id})"))
}

func TestRedact(t *testing.T) {
	require.Equal(t, "postgres://geored:xxxxx@db:5432/h", redact("postgres://geored:secret@db:5432/h"))
	require.Equal(t, "host=db password=xxxxx dbname=h", redact("host=db password=secret dbname=h"))
}

// TestLinesBetween: the lines of the nights asked for, both ends
// included, and no others.
func TestLinesBetween(t *testing.T) {
	ctx := context.Background()
	s := open(t, filepath.Join(t.TempDir(), "history.db"))
	for _, night := range []string{"2026-11-29", "2026-11-30", "2026-12-01", "2026-12-02"} {
		r := begin(t, s, "bridge", night)
		f := File{Job: "bridge", SHA256: night, Name: night + ".csv", Night: night, RunID: r.ID, Status: StatusReduced}
		_, err := s.Record(ctx, &f, nil, []Line{{Instrument: "ts-1", From: "A", To: "B", N: 1, Geodesic: 500, SigmaMM: 1}}, nil)
		require.NoError(t, err)
	}
	got, err := s.LinesBetween(ctx, "bridge", "2026-11-30", "2026-12-01")
	require.NoError(t, err)
	require.Len(t, got, 2)
	require.Equal(t, "2026-11-30", got[0].Night)
	require.Equal(t, "2026-12-01", got[1].Night)
}
