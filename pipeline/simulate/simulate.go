package simulate

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"sort"
	"strconv"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/caseweave/caseweave/pipeline/internal/numeric"
	"github.com/caseweave/caseweave/pipeline/linelist"
)

// Scenario sets the process and how it is observed.
type Scenario struct {
	R, K                 float64 // offspring: negative binomial mean and dispersion (K ≤ 0 or +Inf: Poisson)
	SerialMean, SerialSD float64 // gamma serial interval, days
	IndexCases           int
	Start                linelist.Day // onset of the first index case
	IndexSpreadDays      int          // index-case onsets fall uniformly in [Start, Start+IndexSpreadDays]
	Until                *linelist.Day
	Generations          int // stop after this many generations (0: no limit; then Until is required)
	Jurisdictions        []string
	Settings             []string
	AgeGroups            []string
	// StayProbability is the chance an infectee lives in its infector's jurisdiction.
	StayProbability float64
	// AssortativeAge is the chance an infectee shares its infector's age group.
	AssortativeAge float64
	// MissingLinks is the share of infector links blanked in the written line list.
	MissingLinks float64
	// MaxCases stops a run that grows past this many cases with an error (0: 2,000,000).
	MaxCases int
	Seed     uint64
}

// Record is one simulated case with the truth behind it. TrueInfector is the case that
// really infected it; InfectorID is what the line list shows (blank when the link was lost).
type Record struct {
	ID           string
	TrueInfector string
	InfectorID   string
	Onset        linelist.Day
	Generation   int
	Imported     bool
	Jurisdiction string
	Setting      string
	AgeGroup     string
}

// Validate reports the first setting that cannot produce a line list.
func (sc *Scenario) Validate() error {
	switch {
	case !(sc.R >= 0) || math.IsInf(sc.R, 0):
		return fmt.Errorf("R must be a finite number ≥ 0, got %v", sc.R)
	case math.IsNaN(sc.K):
		return errors.New("k must be a number")
	case !(sc.SerialMean > 0) || !(sc.SerialSD > 0) || math.IsInf(sc.SerialMean, 0) || math.IsInf(sc.SerialSD, 0):
		return fmt.Errorf("the serial interval needs a positive mean and sd, got %v and %v", sc.SerialMean, sc.SerialSD)
	case sc.IndexCases < 1:
		return fmt.Errorf("at least one index case is needed, got %d", sc.IndexCases)
	case sc.Until == nil && sc.Generations <= 0:
		return errors.New("set an observation date (--until) or a number of generations (--generations), or the outbreak may never stop")
	case sc.IndexSpreadDays < 0:
		return errors.New("the index-case spread cannot be negative")
	case sc.MissingLinks < 0 || sc.MissingLinks > 1:
		return fmt.Errorf("the share of missing links must be in [0, 1], got %v", sc.MissingLinks)
	case sc.StayProbability < 0 || sc.StayProbability > 1 || sc.AssortativeAge < 0 || sc.AssortativeAge > 1:
		return errors.New("probabilities must be in [0, 1]")
	}
	return nil
}

// Run simulates the scenario and returns its cases sorted by onset, then identifier.
func Run(sc Scenario) ([]Record, error) {
	if err := sc.Validate(); err != nil {
		return nil, err
	}
	maxCases := sc.MaxCases
	if maxCases <= 0 {
		maxCases = 2000000
	}
	rng := rand.New(rand.NewPCG(sc.Seed, 0x63617365776561)) // "caseweave" as the stream
	src := rng                                              // *rand.Rand is a rand.Source for gonum
	shape := (sc.SerialMean / sc.SerialSD) * (sc.SerialMean / sc.SerialSD)
	serial := distuv.Gamma{Alpha: shape, Beta: shape / sc.SerialMean, Src: src}
	poissonOnly := sc.K <= 0 || math.IsInf(sc.K, 1)
	var nu distuv.Gamma
	if !poissonOnly {
		nu = distuv.Gamma{Alpha: sc.K, Beta: sc.K / sc.R, Src: src}
	}
	pick := func(xs []string) string {
		if len(xs) == 0 {
			return ""
		}
		return xs[rng.IntN(len(xs))]
	}
	observed := func(d linelist.Day) bool { return sc.Until == nil || d <= *sc.Until }

	var recs []Record
	next := func() string { return "C" + strconv.Itoa(100000+len(recs)) }
	for i := 0; i < sc.IndexCases; i++ {
		on := sc.Start
		if sc.IndexSpreadDays > 0 {
			on += linelist.Day(rng.IntN(sc.IndexSpreadDays + 1))
		}
		if !observed(on) {
			continue
		}
		recs = append(recs, Record{
			ID: next(), Onset: on, Imported: true,
			Jurisdiction: pick(sc.Jurisdictions), Setting: pick(sc.Settings), AgeGroup: pick(sc.AgeGroups),
		})
	}
	// Breadth-first by generation: recs[lo:hi] is the current generation.
	for lo, hi, gen := 0, len(recs), 0; lo < hi; lo, hi, gen = hi, len(recs), gen+1 {
		if sc.Generations > 0 && gen >= sc.Generations {
			break
		}
		for p := lo; p < hi; p++ {
			mean := sc.R
			if !poissonOnly && sc.R > 0 {
				mean = nu.Rand()
			}
			z := 0
			if mean > 0 {
				z = int(distuv.Poisson{Lambda: mean, Src: src}.Rand())
			}
			parent := recs[p]
			for c := 0; c < z; c++ {
				on := parent.Onset + linelist.Day(math.Round(serial.Rand()))
				if !observed(on) {
					continue
				}
				if len(recs) >= maxCases {
					return nil, fmt.Errorf("the outbreak grew past %d cases; lower R, set an earlier --until or fewer --generations", maxCases)
				}
				r := Record{
					ID: next(), TrueInfector: parent.ID, InfectorID: parent.ID, Onset: on, Generation: gen + 1,
					Jurisdiction: parent.Jurisdiction, Setting: pick(sc.Settings), AgeGroup: parent.AgeGroup,
				}
				if rng.Float64() >= sc.StayProbability {
					r.Jurisdiction = pick(sc.Jurisdictions)
				}
				if rng.Float64() >= sc.AssortativeAge {
					r.AgeGroup = pick(sc.AgeGroups)
				}
				if sc.MissingLinks > 0 && rng.Float64() < sc.MissingLinks {
					r.InfectorID = ""
				}
				recs = append(recs, r)
			}
		}
	}
	sort.SliceStable(recs, func(i, j int) bool {
		if recs[i].Onset != recs[j].Onset {
			return recs[i].Onset < recs[j].Onset
		}
		return recs[i].ID < recs[j].ID
	})
	return recs, nil
}

// WriteOptions shapes the written file.
type WriteOptions struct {
	// ContactColumns adds invented name, phone and address columns, the kind a real export
	// carries, so that tests and the demo can show that none of them reaches a report.
	ContactColumns bool
	// ReportDelay is the fixed number of days from onset to report (0: no report_date).
	ReportDelay int
	// ReportDelayMean, when positive, replaces ReportDelay by a random delay of this mean:
	// negative binomial of size 2 (a gamma–Poisson mixture, Johnson, Kemp & Kotz 2005,
	// Univariate Discrete Distributions, §5.3), so that some reports come much later than
	// most; each case's from its own stream of DelaySeed, so the file is reproducible.
	ReportDelayMean float64
	DelaySeed       uint64
	// ReportedBy, when set, leaves out the cases reported after it: the export as it
	// stands on that day.
	ReportedBy *linelist.Day
}

// reportDelay is the delay of record i under opts (ReportDelay or ReportDelayMean).
func (opts WriteOptions) reportDelay(i int) int {
	if opts.ReportDelayMean <= 0 {
		return opts.ReportDelay
	}
	rng := numeric.StreamRand(opts.DelaySeed, i)
	return numeric.Poisson(rng, numeric.Gamma(rng, 2)*opts.ReportDelayMean/2)
}

// contactColumns are the invented personal-data columns of WriteOptions.ContactColumns.
var contactColumns = []string{"full_name", "phone", "home_address"}

// WriteCSV writes the records as a canonical line list (UTF-8, comma, header): the columns
// of linelist.Columns in their order, each value as Column.Format writes it.
func WriteCSV(w io.Writer, recs []Record, opts WriteOptions) error {
	cols := linelist.Columns()
	cw := csv.NewWriter(w)
	header := linelist.ColumnNames()
	if opts.ContactColumns {
		header = append(header, contactColumns...)
	}
	if err := cw.Write(header); err != nil {
		return err
	}
	row := make([]string, len(header))
	for i, r := range recs {
		c := linelist.Case{ID: r.ID, InfectorID: r.InfectorID, Onset: r.Onset, Imported: r.Imported,
			Strata: &linelist.Strata{Setting: r.Setting, AgeGroup: r.AgeGroup, Jurisdiction: r.Jurisdiction}}
		if opts.ReportDelay > 0 || opts.ReportDelayMean > 0 {
			c.Report, c.HasReport = r.Onset+linelist.Day(opts.reportDelay(i)), true
			if opts.ReportedBy != nil && c.Report > *opts.ReportedBy {
				continue
			}
		}
		for j, col := range cols {
			row[j] = col.Format(&c)
		}
		if opts.ContactColumns {
			copy(row[len(cols):], []string{inventedName(i), inventedPhone(i), inventedAddress(i)})
		}
		if err := cw.Write(row); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// Invented personal data: syllables and numbers that belong to nobody.
var (
	givenSyllables  = []string{"Ar", "Bel", "Cor", "Dun", "El", "Fen", "Gar", "Hal", "Iv", "Jor", "Kel", "Lun"}
	familySyllables = []string{"vane", "tor", "mere", "wick", "holt", "brae", "stone", "ley"}
	streets         = []string{"Lantern Row", "Quarry Lane", "Heron Walk", "Tallow Street", "Brine Court"}
)

func inventedName(i int) string {
	return givenSyllables[i%len(givenSyllables)] + "a " +
		givenSyllables[(i/7)%len(givenSyllables)] + familySyllables[(i/3)%len(familySyllables)]
}

func inventedPhone(i int) string { return fmt.Sprintf("+00 555 %04d %03d", i%10000, (i*37)%1000) }

func inventedAddress(i int) string {
	return fmt.Sprintf("%d %s", 1+i%200, streets[i%len(streets)])
}
