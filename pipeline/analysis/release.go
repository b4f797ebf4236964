package analysis

import (
	"crypto/hmac"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"path"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"github.com/caseweave/caseweave/pipeline/linelist"
)

// DefaultSuppressBelow is the small-count threshold when a policy gives none: counts from 1
// to 4 are withheld (common practice in public-health reporting, with no single standard;
// thresholds from 3 to 11 are in use).
const DefaultSuppressBelow = 5

// Policy is the disclosure policy of a release: what a Summary may show once it leaves the
// analyst.
type Policy struct {
	// SuppressBelow withholds counts from 1 to SuppressBelow−1 in stratified tables (0:
	// DefaultSuppressBelow).
	SuppressBelow int
	// Pseudonyms replaces case identifiers; nil keeps them as recorded (--show-ids).
	Pseudonyms *Pseudonyms
}

// Pseudonyms gives each case identifier one label for a whole batch of reports: with a key,
// a keyed hash (HMAC-SHA-256, its first 10 hex digits: the same in every run and report that
// share the key, and not reversible without it); without one, an ordinal in order of first
// appearance across the batch. The key itself appears in no output.
type Pseudonyms struct {
	key  string
	seen map[string]string
}

// NewPseudonyms returns the pseudonyms of one batch; key may be empty (ordinals).
func NewPseudonyms(key string) *Pseudonyms {
	return &Pseudonyms{key: key, seen: map[string]string{}}
}

// Of returns the pseudonym of a case identifier.
func (p *Pseudonyms) Of(id string) string {
	if v, ok := p.seen[id]; ok {
		return v
	}
	var v string
	if p.key != "" {
		m := hmac.New(sha256.New, []byte(p.key))
		m.Write([]byte(id))
		v = "case-" + hex.EncodeToString(m.Sum(nil))[:10]
	} else {
		v = "case-" + strconv.Itoa(len(p.seen)+1)
	}
	p.seen[id] = v
	return v
}

// Released is a Summary made fit to leave the analyst: the only input of every stakeholder
// output (the report, its chart data, its tables and JSON, the index, the mail). It can be
// made only by Release.
type Released struct{ s *Summary }

// Summary is the released view; callers must not change it.
func (r *Released) Summary() *Summary { return r.s }

// baseName is a path's last element, so that a released view does not show the analyst's
// folders.
func baseName(p string) string { return path.Base(filepath.ToSlash(p)) }

// Release makes the view of s that stakeholders receive, under policy p. It works on a deep
// copy; s is unchanged and stays the analyst's (see --internal-json). What changes:
//
//   - case identifiers become pseudonyms (unless p.Pseudonyms is nil), problem messages,
//     which quote values of the rows, become the plain meaning of their code (line numbers
//     stay), and the input's path becomes its file name;
//   - stratified counts — the epidemic curve by week and setting, the cases by week, setting
//     and age group, the age-mixing cells — below the threshold are withheld, with
//     complementary suppression so that no withheld count can be recovered by subtraction
//     within a table (see suppressTables); a stratum's mean offspring is withheld unless
//     the cases it rests on reach the threshold;
//   - a case in a drawn chain keeps its pseudonym, generation and onset week (its exact
//     onset date is replaced by the Monday of its ISO week), and its setting only where
//     the setting has at least the threshold of cases in the report.
func Release(s *Summary, p Policy) (*Released, error) {
	thr := p.SuppressBelow
	if thr == 0 {
		thr = DefaultSuppressBelow
	}
	if thr < 1 {
		return nil, fmt.Errorf("the suppression threshold must be at least 1, got %d", thr)
	}
	c, err := deepCopy(s)
	if err != nil {
		return nil, err
	}
	c.Settings.SuppressBelow = thr
	c.Input.Path = baseName(c.Input.Path)
	names := make([]string, len(c.Input.Files))
	for i := range c.Input.Files {
		c.Input.Files[i].Path = baseName(c.Input.Files[i].Path)
		names[i] = c.Input.Files[i].Path
	}
	if len(names) > 1 {
		c.Input.Path = strings.Join(names, ", ")
	}
	for i := range c.Problems {
		c.Problems[i].Message = c.Problems[i].Code.Meaning()
		c.Problems[i].File = baseName(c.Problems[i].File)
	}
	if p.Pseudonyms != nil {
		pseudonymise(c, p.Pseudonyms)
		c.Settings.Pseudonymised = true
	}
	t := countTables(c)
	suppressTables(t, thr)
	t.withhold()
	// A view released again (caseweave mail re-releases a report's JSON) keeps the caution
	// of its first release, whose count is of the counts it withheld then.
	if held := t.held(); held > 0 && !slices.ContainsFunc(c.Cautions, func(x Caution) bool { return x.Kind == CautionWithheldCounts }) {
		c.Cautions = append(c.Cautions, Caution{Kind: CautionWithheldCounts, Text: fmt.Sprintf(
			"%s in the tables by week, setting and age group are withheld: counts from 1 to %d, and the counts that would let one be worked out, are not shown, to protect the people behind small numbers.",
			countOf(held, "count"), thr-1)})
	}
	for i := range c.Strata {
		st := &c.Strata[i]
		if st.Cases == nil || st.Counted == nil || *st.Counted < thr {
			st.MeanOffspring = nil
		}
		st.Counted = nil
	}
	releaseWeeks(c)
	releaseNowcast(c)
	releaseBacktest(c, thr)
	releaseTrend(c)
	releaseSinceLast(c, thr)
	releaseForecastCheck(c)
	releaseBackfill(c)
	coarsenTrees(c, thr)
	releaseMultitype(c, thr)
	return &Released{s: c}, nil
}

// deepCopy copies a Summary through its JSON form, which holds every field; nothing of the
// copy is shared with s.
func deepCopy(s *Summary) (*Summary, error) {
	b, err := json.Marshal(s)
	if err != nil {
		var ue *json.UnsupportedValueError
		if errors.As(err, &ue) {
			return nil, fmt.Errorf("release: the summary holds a number that is not finite (%s); every number of a summary must be", ue.Str)
		}
		return nil, fmt.Errorf("release: %w", err)
	}
	var c Summary
	if err := json.Unmarshal(b, &c); err != nil {
		return nil, fmt.Errorf("release: %w", err)
	}
	return &c, nil
}

func pseudonymise(c *Summary, ps *Pseudonyms) {
	if o := c.Offspring; o != nil {
		for i, id := range o.Superspreaders {
			o.Superspreaders[i] = ps.Of(id)
		}
	}
	if cl := c.Clusters; cl != nil {
		for i := range cl.Largest {
			tv := &cl.Largest[i]
			tv.Root = ps.Of(tv.Root)
			for j := range tv.Nodes {
				tv.Nodes[j].ID = ps.Of(tv.Nodes[j].ID)
			}
		}
	}
}

// releaseWeeks gives the weekly reproduction numbers the weekly counts of the released
// epidemic curve (the same counts), and withholds a week's R with its count.
func releaseWeeks(c *Summary) {
	shown := map[linelist.Day]*int{}
	if e := c.EpiCurve; e != nil {
		for k, w := range e.Weeks {
			shown[w] = e.Total[k]
		}
	}
	for i := range c.TimeVarying {
		w := &c.TimeVarying[i]
		if n, ok := shown[w.WeekStart]; !ok || n == nil {
			w.Cases, w.R, w.Lower, w.Upper = nil, nil, nil, nil
		}
	}
}

// coarsenTrees replaces each drawn case's onset date by its ISO week and keeps its setting
// only where the setting's case count in the report is shown and reaches the threshold.
func coarsenTrees(c *Summary, thr int) {
	cl := c.Clusters
	if cl == nil {
		return
	}
	common := map[string]bool{}
	for _, st := range c.Strata {
		if st.Column == linelist.ColSetting && st.Cases != nil && *st.Cases >= thr {
			common[st.Value] = true
		}
	}
	for i := range cl.Largest {
		tv := &cl.Largest[i]
		tv.Start = tv.Start.ISOWeekStart()
		for j := range tv.Nodes {
			n := &tv.Nodes[j]
			n.Onset = n.Onset.ISOWeekStart()
			if !common[label(n.Setting)] {
				n.Setting = ""
			}
		}
	}
}

// releaseTrend withholds the week-on-week comparison when the epidemic curve withholds
// either of its weeks: its counts, and its p-value, would give them away.
func releaseTrend(c *Summary) {
	if c.Assessment == nil || c.Assessment.Trend == nil || c.EpiCurve == nil {
		return
	}
	t := c.Assessment.Trend
	for k, w := range c.EpiCurve.Weeks {
		if (w == t.Week || w == t.Previous) && c.EpiCurve.Total[k] == nil {
			t.Count, t.PreviousCount, t.PValue, t.Kind = nil, nil, nil, "withheld"
			return
		}
	}
}
