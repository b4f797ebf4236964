// Package history is the run archive: one SQLite file (through modernc.org/sqlite, pure Go,
// so no C compiler is needed) where report and estimate record each run — its analysis
// date, jurisdiction, tool version, input hash, released Summary, key estimates, forecast
// by week and a fingerprint of every case — so that the next run can say what changed.
//
// The archive holds case-level data (hashed identifiers and infectors, exact onset and
// report dates) and stays with the analyst; what reaches a report comes through the
// released view only.
//
// A file that is not an archive — another program's SQLite database, a damaged or
// truncated file — is refused with an *Error and never written to. A run is recorded in one
// transaction; a run that fails records nothing. WAL mode and a busy timeout let two runs
// record at once.
package history

import (
	"bytes"
	"crypto/rand"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"net/url"
	"os"
	"strings"

	_ "modernc.org/sqlite" // the database/sql driver "sqlite"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

// applicationID marks a caseweave archive in the SQLite header ("CWHA").
const applicationID = 0x43574841

// busyTimeoutMS is how long a run waits for another run's write to end.
const busyTimeoutMS = 30000

// Error is an archive that cannot be used, with the file and the reason.
type Error struct {
	Path string
	Err  error
}

func (e *Error) Error() string { return fmt.Sprintf("run archive %s: %v", e.Path, e.Err) }
func (e *Error) Unwrap() error { return e.Err }

// Archive is an open run archive. A file not yet there is created by the first Record.
type Archive struct {
	path string
	db   *sql.DB // nil until the file exists
}

// Open opens the archive at path, checking first, without writing, that an existing file
// is a caseweave archive whole and of a schema this version knows; then it is brought to
// the current schema.
func Open(path string) (*Archive, error) {
	a := &Archive{path: path}
	st, err := os.Stat(path)
	switch {
	case errors.Is(err, os.ErrNotExist):
		return a, nil
	case err != nil:
		return nil, &Error{path, err}
	case st.IsDir():
		return nil, &Error{path, errors.New("is a folder, not a file")}
	case st.Size() == 0:
		// An empty file is an empty database to SQLite: there is nothing in it to lose.
	default:
		if err := checkHeader(path); err != nil {
			return nil, &Error{path, err}
		}
		if err := checkLeavingNoTrace(path); err != nil {
			return nil, &Error{path, err}
		}
	}
	if err := a.open(); err != nil {
		return nil, err
	}
	return a, nil
}

// dsn is the driver's name for path: a busy timeout, foreign keys, and transactions that
// take the write lock at their start (so that two runs queue rather than deadlock).
func dsn(path string, readOnly bool) string {
	q := url.Values{}
	q.Add("_pragma", fmt.Sprintf("busy_timeout(%d)", busyTimeoutMS))
	q.Add("_pragma", "foreign_keys(1)")
	if readOnly {
		q.Set("mode", "ro")
	} else {
		q.Set("_txlock", "immediate")
	}
	return "file:" + (&url.URL{Path: path}).EscapedPath() + "?" + q.Encode()
}

// checkHeader refuses a file that does not begin with SQLite's magic string.
func checkHeader(path string) error {
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	defer f.Close()
	head := make([]byte, 16)
	if _, err := io.ReadFull(f, head); err != nil || !bytes.Equal(head, []byte("SQLite format 3\x00")) {
		return errors.New("is not a caseweave run archive (not an SQLite database); it is left as it is — give --history a new file name or the archive's own")
	}
	return nil
}

// checkLeavingNoTrace is check, and when the file is refused, removes the -wal and -shm
// files that SQLite makes beside a database in WAL mode on opening it, if they were not
// there before: a refused file is left as it was found.
func checkLeavingNoTrace(path string) error {
	var made []string
	for _, side := range []string{path + "-wal", path + "-shm"} {
		if _, err := os.Lstat(side); errors.Is(err, os.ErrNotExist) {
			made = append(made, side)
		}
	}
	err := check(path)
	if err != nil {
		for _, side := range made {
			os.Remove(side)
		}
	}
	return err
}

// check reads an existing database without writing: its application id, schema version
// and integrity.
func check(path string) error {
	db, err := sql.Open("sqlite", dsn(path, true))
	if err != nil {
		return err
	}
	defer db.Close()
	var app, ver, tables int
	if err := db.QueryRow("PRAGMA application_id").Scan(&app); err != nil {
		return damaged(err)
	}
	if err := db.QueryRow("PRAGMA user_version").Scan(&ver); err != nil {
		return damaged(err)
	}
	if err := db.QueryRow("SELECT count(*) FROM sqlite_master").Scan(&tables); err != nil {
		return damaged(err)
	}
	if app != applicationID && (app != 0 || tables > 0) {
		return errors.New("is an SQLite database of another program, not a caseweave run archive; it is left as it is")
	}
	if ver > len(migrations) {
		return fmt.Errorf("has schema version %d, newer than this caseweave knows (%d): use a newer caseweave", ver, len(migrations))
	}
	rows, err := db.Query("PRAGMA quick_check")
	if err != nil {
		return damaged(err)
	}
	defer rows.Close()
	var msgs []string
	for rows.Next() {
		var m string
		if err := rows.Scan(&m); err != nil {
			return damaged(err)
		}
		msgs = append(msgs, m)
	}
	if err := rows.Err(); err != nil {
		return damaged(err)
	}
	if len(msgs) != 1 || msgs[0] != "ok" {
		return damaged(errors.New(strings.Join(msgs, "; ")))
	}
	return nil
}

func damaged(err error) error {
	return fmt.Errorf("is damaged (%v); it is left as it is — restore it from a backup or start a new archive", err)
}

// open opens the file read-write in WAL mode and migrates it.
func (a *Archive) open() error {
	db, err := sql.Open("sqlite", dsn(a.path, false))
	if err != nil {
		return &Error{a.path, err}
	}
	if _, err := db.Exec("PRAGMA journal_mode=WAL"); err != nil {
		db.Close()
		return &Error{a.path, err}
	}
	if err := migrate(db); err != nil {
		db.Close()
		return &Error{a.path, err}
	}
	a.db = db
	return nil
}

// Close closes the archive.
func (a *Archive) Close() error {
	if a == nil || a.db == nil {
		return nil
	}
	return a.db.Close()
}

// Path is the archive's file.
func (a *Archive) Path() string { return a.path }

// key is the archive's hashing key, made when the archive was (nil before that).
func (a *Archive) key() ([]byte, error) {
	if a.db == nil {
		return nil, nil
	}
	var k []byte
	err := a.db.QueryRow("SELECT value FROM meta WHERE key = 'hash_key'").Scan(&k)
	return k, err
}

// newKey is a fresh hashing key.
func newKey() []byte {
	k := make([]byte, 32)
	rand.Read(k) // crypto/rand.Read never returns an error
	return k
}

// Run is one report or estimate run to record.
type Run struct {
	Jurisdiction string
	AsOf         linelist.Day
	Version      string
	InputSHA256  string
	// Released is the released Summary as written (its JSON); Summary is the same view.
	Released []byte
	Summary  *analysis.Summary
	// Cases, those Select keeps (all when nil), are fingerprinted under the archive's key.
	Cases  []linelist.Case
	Select func(*linelist.Case) bool
}

// Record stores the runs of one invocation in one transaction: all or none. It creates the
// file if it is not there yet.
func (a *Archive) Record(runs []Run) error {
	if a.db == nil {
		if err := a.open(); err != nil {
			return err
		}
	}
	tx, err := a.db.Begin()
	if err != nil {
		return &Error{a.path, err}
	}
	defer tx.Rollback()
	var key []byte
	if err := tx.QueryRow("SELECT value FROM meta WHERE key = 'hash_key'").Scan(&key); err != nil {
		return &Error{a.path, err}
	}
	for _, r := range runs {
		if err := insertRun(tx, r, key); err != nil {
			return &Error{a.path, err}
		}
	}
	if err := tx.Commit(); err != nil {
		return &Error{a.path, err}
	}
	return nil
}

func insertRun(tx *sql.Tx, r Run, key []byte) error {
	res, err := tx.Exec("INSERT INTO runs(jurisdiction, as_of, version, input_sha256, summary) VALUES(?, ?, ?, ?, ?)",
		r.Jurisdiction, r.AsOf.String(), r.Version, r.InputSHA256, string(r.Released))
	if err != nil {
		return err
	}
	id, err := res.LastInsertId()
	if err != nil {
		return err
	}
	st, err := tx.Prepare("INSERT INTO cases(run, key, infector, onset, report, attrs) VALUES(?, ?, ?, ?, ?, ?)")
	if err != nil {
		return err
	}
	defer st.Close()
	for _, c := range analysis.Fingerprints(r.Cases, r.Select, key) {
		var rep any
		if c.HasReport {
			rep = int64(c.Report)
		}
		if _, err := st.Exec(id, c.Key, c.Infector, int64(c.Onset), rep, c.Attrs); err != nil {
			return err
		}
	}
	return insertDerived(tx, id, r.Summary)
}

// insertDerived stores the estimates and the forecast weeks of run id from its Summary.
func insertDerived(tx *sql.Tx, id int64, s *analysis.Summary) error {
	if s == nil {
		return nil
	}
	t := analysis.TrendOf(s)
	spans := []struct {
		name string
		s    analysis.Span
	}{{"R", t.R}, {"k", t.K}, {"recent_R", t.RecentR}, {"die_out", t.DieOut}}
	for _, x := range spans {
		if _, err := tx.Exec("INSERT INTO estimates(run, name, estimate, lower, upper) VALUES(?, ?, ?, ?, ?)",
			id, x.name, nullF(x.s.Estimate), nullF(x.s.Lower), nullF(x.s.Upper)); err != nil {
			return err
		}
	}
	if f := s.Forecast; f != nil {
		for _, w := range f.Weeks {
			if _, err := tx.Exec("INSERT INTO forecast_weeks(run, week_start, mean, median, p50_lower, p50_upper, p90_lower, p90_upper) VALUES(?, ?, ?, ?, ?, ?, ?, ?)",
				id, w.WeekStart.String(), nullF(w.Mean), nullI(w.Median), nullI(w.P50[0]), nullI(w.P50[1]), nullI(w.P90[0]), nullI(w.P90[1])); err != nil {
				return err
			}
		}
	}
	return nil
}

func nullF(p *float64) any {
	if p == nil {
		return nil
	}
	return *p
}

func nullI(p *int) any {
	if p == nil {
		return nil
	}
	return int64(*p)
}

// Entry is one archived run; Released is its released Summary as stored (JSON) and
// Summary the same read back.
type Entry struct {
	ID           int64
	Jurisdiction string
	AsOf         linelist.Day
	Version      string
	InputSHA256  string
	Released     json.RawMessage
	Summary      *analysis.Summary
}

// Runs are the archived runs of a jurisdiction before the analysis date before, oldest
// first, one per analysis date (the last recorded of that date).
func (a *Archive) Runs(jurisdiction string, before linelist.Day) ([]Entry, error) {
	if a.db == nil {
		return nil, nil
	}
	return a.entries(`SELECT id, jurisdiction, as_of, version, input_sha256, summary FROM runs
		WHERE id IN (SELECT max(id) FROM runs WHERE jurisdiction = ? AND as_of < ? GROUP BY as_of)
		ORDER BY as_of`, jurisdiction, before.String())
}

// Filter picks archived runs: of Jurisdiction (any when empty), with an analysis date
// from From to To, both included (no bound when nil).
type Filter struct {
	Jurisdiction string
	From, To     *linelist.Day
}

// List is every archived run Filter keeps, by analysis date and then in the order
// recorded; nothing when the archive file does not exist yet.
func (a *Archive) List(f Filter) ([]Entry, error) {
	if a.db == nil {
		return nil, nil
	}
	q := "SELECT id, jurisdiction, as_of, version, input_sha256, summary FROM runs WHERE 1"
	var args []any
	if f.Jurisdiction != "" {
		q += " AND jurisdiction = ?"
		args = append(args, f.Jurisdiction)
	}
	if f.From != nil {
		q += " AND as_of >= ?"
		args = append(args, f.From.String())
	}
	if f.To != nil {
		q += " AND as_of <= ?"
		args = append(args, f.To.String())
	}
	return a.entries(q+" ORDER BY as_of, id", args...)
}

// entries reads the runs query q selects (id, jurisdiction, as_of, version, input_sha256,
// summary).
func (a *Archive) entries(q string, args ...any) ([]Entry, error) {
	rows, err := a.db.Query(q, args...)
	if err != nil {
		return nil, &Error{a.path, err}
	}
	defer rows.Close()
	var out []Entry
	for rows.Next() {
		var e Entry
		var asOf, js string
		if err := rows.Scan(&e.ID, &e.Jurisdiction, &asOf, &e.Version, &e.InputSHA256, &js); err != nil {
			return nil, &Error{a.path, err}
		}
		if e.AsOf, err = linelist.ParseISODay(asOf); err != nil {
			return nil, &Error{a.path, fmt.Errorf("run %d has analysis date %q: %w", e.ID, asOf, err)}
		}
		e.Released = json.RawMessage(js)
		e.Summary = new(analysis.Summary)
		if err := json.Unmarshal(e.Released, e.Summary); err != nil {
			return nil, &Error{a.path, fmt.Errorf("run %d's summary cannot be read: %w", e.ID, err)}
		}
		out = append(out, e)
	}
	if err := rows.Err(); err != nil {
		return nil, &Error{a.path, err}
	}
	return out, nil
}

// cases are the case prints of run id.
func (a *Archive) cases(id int64) ([]analysis.CasePrint, error) {
	rows, err := a.db.Query("SELECT key, infector, onset, report, attrs FROM cases WHERE run = ? ORDER BY rowid", id)
	if err != nil {
		return nil, &Error{a.path, err}
	}
	defer rows.Close()
	var out []analysis.CasePrint
	for rows.Next() {
		var c analysis.CasePrint
		var onset int64
		var rep sql.NullInt64
		if err := rows.Scan(&c.Key, &c.Infector, &onset, &rep, &c.Attrs); err != nil {
			return nil, &Error{a.path, err}
		}
		c.Onset = linelist.Day(onset)
		c.Report, c.HasReport = linelist.Day(rep.Int64), rep.Valid
		out = append(out, c)
	}
	return out, rows.Err()
}

// Annotate fills s's SinceLast (against the latest earlier run of the jurisdiction), Trend
// and ForecastCheck from the archive; cases, those sel keeps, are s's cases.
func (a *Archive) Annotate(s *analysis.Summary, jurisdiction string, cases []linelist.Case, sel func(*linelist.Case) bool) error {
	runs, err := a.Runs(jurisdiction, s.AsOf)
	if err != nil || len(runs) == 0 {
		return err
	}
	key, err := a.key()
	if err != nil {
		return &Error{a.path, err}
	}
	now := analysis.Fingerprints(cases, sel, key)
	sums := make([]*analysis.Summary, len(runs))
	for i := range runs {
		sums[i] = runs[i].Summary
	}
	last := runs[len(runs)-1]
	prints, err := a.cases(last.ID)
	if err != nil {
		return err
	}
	analysis.CompareRuns(s, now, &analysis.Previous{AsOf: last.AsOf, Version: last.Version, Summary: last.Summary, Cases: prints})
	analysis.FillTrend(s, sums)
	analysis.CheckForecasts(s, sums)
	analysis.FillBackfill(s, sums)
	return nil
}
