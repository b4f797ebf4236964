package history

import (
	"database/sql"
	"encoding/json"
	"os"
	"path/filepath"
	"testing"

	"github.com/caseweave/caseweave/pipeline/analysis"
)

// TestWriteV1Fixture writes testdata/history/v1.sqlite, an archive at schema version 1
// with one run of week1.csv, when CASEWEAVE_WRITE_FIXTURES=1; otherwise it is skipped.
func TestWriteV1Fixture(t *testing.T) {
	if os.Getenv("CASEWEAVE_WRITE_FIXTURES") != "1" {
		t.Skip("CASEWEAVE_WRITE_FIXTURES=1 writes the fixture")
	}
	path := fixtures + "v1.sqlite"
	os.Remove(path)
	db, err := sql.Open("sqlite", dsn(path, false))
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	if err := migrateTo(db, 1); err != nil {
		t.Fatal(err)
	}
	r := run(t, "week1.csv", "2026-03-13")
	r.Summary.Offspring = &Offspring{R: analysis.Estimate{Estimate: fp(1.4), Percentile: [2]*float64{fp(0.9), fp(2.1)}}}
	r.Summary.Forecast = &analysis.Forecast{Weeks: []analysis.ForecastWeek{{WeekStart: day(t, "2026-03-16"), Median: ptr(3), P50: [2]*int{ptr(2), ptr(4)}, P90: [2]*int{ptr(1), ptr(6)}}}}
	js, err := json.Marshal(r.Summary)
	if err != nil {
		t.Fatal(err)
	}
	// The version-1 insert: a run and its cases, no estimates or forecast tables.
	tx, err := db.Begin()
	if err != nil {
		t.Fatal(err)
	}
	var key []byte
	if err := tx.QueryRow("SELECT value FROM meta WHERE key = 'hash_key'").Scan(&key); err != nil {
		t.Fatal(err)
	}
	res, err := tx.Exec("INSERT INTO runs(jurisdiction, as_of, version, input_sha256, summary) VALUES(?, ?, ?, ?, ?)",
		r.Jurisdiction, r.AsOf.String(), "v1-fixture", "00", string(js))
	if err != nil {
		t.Fatal(err)
	}
	id, _ := res.LastInsertId()
	for _, c := range analysis.Fingerprints(r.Cases, nil, key) {
		if _, err := tx.Exec("INSERT INTO cases(run, key, infector, onset, report, attrs) VALUES(?, ?, ?, ?, ?, ?)",
			id, c.Key, c.Infector, int64(c.Onset), int64(c.Report), c.Attrs); err != nil {
			t.Fatal(err)
		}
	}
	if err := tx.Commit(); err != nil {
		t.Fatal(err)
	}
	if _, err := db.Exec("PRAGMA journal_mode=DELETE"); err != nil {
		t.Fatal(err)
	}
}

// Offspring is analysis.Offspring, short for the fixture.
type Offspring = analysis.Offspring

func fp(v float64) *float64 { return &v }

// TestMigratesV1: the version-1 fixture opens at the current version, its run's estimates
// and forecast filled from its summary, and its cases still compare with a new export.
func TestMigratesV1(t *testing.T) {
	b, err := os.ReadFile(fixtures + "v1.sqlite")
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "a.sqlite")
	if err := os.WriteFile(path, b, 0o644); err != nil {
		t.Fatal(err)
	}
	a, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer a.Close()
	var ver int
	var r, lo, hi float64
	var median, p90hi int
	a.db.QueryRow("PRAGMA user_version").Scan(&ver)
	if ver != SchemaVersion() || ver < 2 {
		t.Fatalf("schema version %d after opening, want %d", ver, SchemaVersion())
	}
	if err := a.db.QueryRow("SELECT estimate, lower, upper FROM estimates WHERE name = 'R'").Scan(&r, &lo, &hi); err != nil {
		t.Fatal(err)
	}
	if r != 1.4 || lo != 0.9 || hi != 2.1 {
		t.Errorf("migrated R %g (%g–%g), want 1.4 (0.9–2.1)", r, lo, hi)
	}
	if err := a.db.QueryRow("SELECT median, p90_upper FROM forecast_weeks WHERE week_start = '2026-03-16'").Scan(&median, &p90hi); err != nil {
		t.Fatal(err)
	}
	if median != 3 || p90hi != 6 {
		t.Errorf("migrated forecast week median %d, upper %d; want 3 and 6", median, p90hi)
	}
	s := &analysis.Summary{AsOf: day(t, "2026-03-20")}
	if err := a.Annotate(s, "North", readCases(t, "week2.csv"), nil); err != nil {
		t.Fatal(err)
	}
	if s.SinceLast == nil || *s.SinceLast.Revisions.Removed != 1 || *s.SinceLast.NewByOnset != 3 {
		t.Errorf("since the migrated run: %+v", s.SinceLast)
	}
}
