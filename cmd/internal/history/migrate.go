package history

import (
	"database/sql"
	"encoding/json"
	"fmt"

	"github.com/caseweave/caseweave/pipeline/analysis"
)

// migrations[v] brings an archive from schema version v to v + 1; PRAGMA user_version holds
// the version. Each runs in the transaction that sets the new version, so an archive is
// always at one version whole. Append only: a released version's step never changes.
var migrations = []func(*sql.Tx) error{
	// 1: the runs and their case prints.
	func(tx *sql.Tx) error {
		for _, q := range []string{
			`CREATE TABLE meta(key TEXT PRIMARY KEY, value BLOB NOT NULL)`,
			`CREATE TABLE runs(
				id INTEGER PRIMARY KEY,
				jurisdiction TEXT NOT NULL,
				as_of TEXT NOT NULL,
				version TEXT NOT NULL,
				input_sha256 TEXT NOT NULL,
				summary TEXT NOT NULL)`,
			`CREATE INDEX runs_by_jurisdiction ON runs(jurisdiction, as_of)`,
			`CREATE TABLE cases(
				run INTEGER NOT NULL REFERENCES runs(id),
				key TEXT NOT NULL,
				infector TEXT NOT NULL,
				onset INTEGER NOT NULL,
				report INTEGER,
				attrs TEXT NOT NULL)`,
			`CREATE INDEX cases_by_run ON cases(run)`,
		} {
			if _, err := tx.Exec(q); err != nil {
				return err
			}
		}
		_, err := tx.Exec("INSERT INTO meta(key, value) VALUES('hash_key', ?)", newKey())
		return err
	},
	// 2: the key estimates and the forecast by week as columns, filled for the runs already
	// there from their summaries.
	func(tx *sql.Tx) error {
		for _, q := range []string{
			`CREATE TABLE estimates(
				run INTEGER NOT NULL REFERENCES runs(id),
				name TEXT NOT NULL,
				estimate REAL, lower REAL, upper REAL,
				PRIMARY KEY(run, name))`,
			`CREATE TABLE forecast_weeks(
				run INTEGER NOT NULL REFERENCES runs(id),
				week_start TEXT NOT NULL,
				mean REAL, median INTEGER,
				p50_lower INTEGER, p50_upper INTEGER, p90_lower INTEGER, p90_upper INTEGER,
				PRIMARY KEY(run, week_start))`,
		} {
			if _, err := tx.Exec(q); err != nil {
				return err
			}
		}
		rows, err := tx.Query("SELECT id, summary FROM runs ORDER BY id")
		if err != nil {
			return err
		}
		type old struct {
			id int64
			s  *analysis.Summary
		}
		var runs []old
		for rows.Next() {
			var o old
			var js string
			if err := rows.Scan(&o.id, &js); err != nil {
				rows.Close()
				return err
			}
			o.s = new(analysis.Summary)
			if err := json.Unmarshal([]byte(js), o.s); err != nil {
				rows.Close()
				return fmt.Errorf("run %d's summary cannot be read: %w", o.id, err)
			}
			runs = append(runs, o)
		}
		rows.Close()
		if err := rows.Err(); err != nil {
			return err
		}
		for _, o := range runs {
			if err := insertDerived(tx, o.id, o.s); err != nil {
				return err
			}
		}
		return nil
	},
}

// SchemaVersion is the schema this version of caseweave writes.
func SchemaVersion() int { return len(migrations) }

// migrate brings db to SchemaVersion, one step per transaction; the transactions take the
// write lock at their start, so two runs opening a new archive at once migrate it once.
func migrate(db *sql.DB) error { return migrateTo(db, len(migrations)) }

// migrateTo brings db to schema version target (the fixture of an older version is made
// with it).
func migrateTo(db *sql.DB, target int) error {
	for {
		done, err := migrateStep(db, target)
		if err != nil || done {
			return err
		}
	}
}

func migrateStep(db *sql.DB, target int) (bool, error) {
	tx, err := db.Begin()
	if err != nil {
		return false, err
	}
	defer tx.Rollback()
	var v int
	if err := tx.QueryRow("PRAGMA user_version").Scan(&v); err != nil {
		return false, err
	}
	if v >= target {
		return true, nil
	}
	if v == 0 {
		if _, err := tx.Exec(fmt.Sprintf("PRAGMA application_id = %d", applicationID)); err != nil {
			return false, err
		}
	}
	if err := migrations[v](tx); err != nil {
		return false, fmt.Errorf("migrating from schema version %d: %w", v, err)
	}
	if _, err := tx.Exec(fmt.Sprintf("PRAGMA user_version = %d", v+1)); err != nil {
		return false, err
	}
	return false, tx.Commit()
}
