package history

// migrations are the schema's versions, in order: migration i brings the
// schema to version i+1. Open applies those a store lacks, each in its own
// transaction with its row in schema_version. Never edit one that has
// shipped: add the next. A statement written "postgres:SQL" or
// "sqlite:SQL" runs on that database alone.
var migrations = [][]string{
	{ // 1: runs, files, observations, lines, instrument fits, alerts
		`CREATE TABLE runs (
			id {id},
			job TEXT NOT NULL,
			night TEXT NOT NULL,
			started TEXT NOT NULL,
			host TEXT NOT NULL,
			pid BIGINT NOT NULL,
			version TEXT NOT NULL
		)`,
		`CREATE TABLE files (
			id {id},
			job TEXT NOT NULL,
			sha256 TEXT NOT NULL,
			name TEXT NOT NULL,
			night TEXT NOT NULL,
			run_id BIGINT NOT NULL REFERENCES runs(id),
			status TEXT NOT NULL,
			reason TEXT NOT NULL,
			results TEXT NOT NULL,
			input_hash TEXT NOT NULL,
			settings TEXT NOT NULL,
			rows_read BIGINT NOT NULL,
			rows_reduced BIGINT NOT NULL,
			rows_rejected BIGINT NOT NULL,
			exit_status BIGINT NOT NULL,
			UNIQUE (job, sha256)
		)`,
		`CREATE TABLE observations (
			file_id BIGINT NOT NULL REFERENCES files(id),
			line_no BIGINT NOT NULL,
			obs_id TEXT NOT NULL,
			from_mark TEXT NOT NULL,
			to_mark TEXT NOT NULL,
			instrument TEXT NOT NULL,
			slope_m DOUBLE PRECISION NOT NULL,
			arc_m DOUBLE PRECISION NOT NULL,
			geodesic_m DOUBLE PRECISION NOT NULL,
			residual_mm DOUBLE PRECISION NOT NULL,
			sigma_mm DOUBLE PRECISION NOT NULL,
			w DOUBLE PRECISION NOT NULL,
			flagged BIGINT NOT NULL
		)`,
		`CREATE INDEX observations_file ON observations (file_id)`,
		`CREATE TABLE lines (
			file_id BIGINT NOT NULL REFERENCES files(id),
			instrument TEXT NOT NULL,
			from_mark TEXT NOT NULL,
			to_mark TEXT NOT NULL,
			n BIGINT NOT NULL,
			geodesic_m DOUBLE PRECISION NOT NULL,
			residual_mm DOUBLE PRECISION NOT NULL,
			sigma_mm DOUBLE PRECISION NOT NULL,
			flagged BIGINT NOT NULL
		)`,
		`CREATE INDEX lines_file ON lines (file_id)`,
		`CREATE TABLE instrument_fits (
			file_id BIGINT NOT NULL REFERENCES files(id),
			instrument TEXT NOT NULL,
			n BIGINT NOT NULL,
			constant_mm DOUBLE PRECISION NOT NULL,
			constant_sigma_mm DOUBLE PRECISION NOT NULL,
			scale_ppm DOUBLE PRECISION NOT NULL,
			scale_sigma_ppm DOUBLE PRECISION NOT NULL,
			evidence TEXT NOT NULL
		)`,
		`CREATE TABLE alerts (
			id {id},
			job TEXT NOT NULL,
			night TEXT NOT NULL,
			kind TEXT NOT NULL,
			subject TEXT NOT NULL,
			message TEXT NOT NULL,
			run_id BIGINT NOT NULL REFERENCES runs(id),
			UNIQUE (job, night, kind, subject)
		)`,
	},
	{ // 2: PostgreSQL checks the foreign key of every observation and line
		// row by a query of its own, a third of the time of COPYing a
		// night; Store.Record writes a file's mark and its rows in one
		// transaction, which is what the keys would guard. SQLite's check
		// costs little, and it cannot drop a constraint.
		`postgres:ALTER TABLE observations DROP CONSTRAINT observations_file_id_fkey`,
		`postgres:ALTER TABLE lines DROP CONSTRAINT lines_file_id_fkey`,
	},
	{ // 3: a night's alerts are a recorded step: alert_nights holds the
		// nights whose alerts were computed from their files; a night
		// with files but no row here is computed by the next run. The
		// nights already in the history were computed by the runs that
		// recorded them.
		`CREATE TABLE alert_nights (
			job TEXT NOT NULL,
			night TEXT NOT NULL,
			run_id BIGINT NOT NULL REFERENCES runs(id),
			PRIMARY KEY (job, night)
		)`,
		`INSERT INTO alert_nights (job, night, run_id) SELECT job, night, MAX(run_id) FROM files GROUP BY job, night`,
	},
}
