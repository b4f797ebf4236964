// Command gen writes examples/ostvale-export.csv: an invented line-list export from the
// invented jurisdiction of Ostvale, in the layout of its (invented) case-management system:
// semicolon-separated, day-first dates, its own headers, and personal columns (names, phone
// numbers, addresses) that caseweave must never read into a report. Every place and person
// in it is made up; the names are built from syllables, not taken from any list.
//
// The outbreak is a branching process with an overdispersed offspring distribution (a few
// cases infect many, most infect none), started by imported cases. Three rows carry
// deliberate problems for `caseweave check` to find: a repeated case reference, an impossible
// onset date and a source case that is not in the export.
//
// The output depends only on the seed, so running
//
//	go run ./examples/gen -o examples/ostvale-export.csv
//
// reproduces the committed file byte for byte (gen_test.go checks this).
package main

import (
	"bufio"
	"flag"
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"time"
)

// Seed is the only source of randomness.
const Seed = 20261127

// Header is the export's header line, in the export's own column order.
var Header = []string{"Case Ref", "Surname", "Given Name", "Phone", "Address", "Source Case",
	"Symptoms From", "Reported", "Place", "Age Band", "District", "Travel"}

// Row is one case as the export writes it.
type Row struct {
	Ref, Surname, Given, Phone, Address, Source string
	Onset, Reported                             string
	Place, AgeBand, District, Travel            string
}

func (r Row) fields() []string {
	return []string{r.Ref, r.Surname, r.Given, r.Phone, r.Address, r.Source, r.Onset, r.Reported,
		r.Place, r.AgeBand, r.District, r.Travel}
}

type person struct {
	ref        string
	onset      time.Time
	parent     int // index of the infector, -1 for an imported case
	place      string
	district   string
	generation int
}

var (
	asOf      = time.Date(2026, 11, 27, 0, 0, 0, 0, time.UTC)
	firstDay  = time.Date(2026, 9, 22, 0, 0, 0, 0, time.UTC)
	places    = []string{"Household", "Household", "Household", "School", "Workplace", "Care home", "Choir"}
	ageBands  = []string{"0-17", "18-39", "40-64", "65+"}
	districts = []string{"Brennmark", "Tarnfield", "Hollow Reach"}
	// offspring is a made-up overdispersed offspring distribution: P(0) = 0.52, mean ≈ 1.2.
	offspringCounts = []int{0, 1, 2, 3, 4, 5, 6, 8, 11}
	offspringWeight = []int{520, 170, 100, 70, 45, 35, 30, 20, 10}

	givenA   = []string{"Bra", "Quel", "Vor", "Ista", "Mor", "Fen", "Ulo", "Tris", "Kael", "Osm", "Rud", "Sev"}
	givenB   = []string{"dwin", "tharis", "enka", "vel", "rique", "sana", "bront", "ilde", "quor", "mira", "oval", "ette"}
	surnameA = []string{"Hask", "Vendr", "Olm", "Strak", "Pell", "Quirn", "Tobb", "Yarr", "Zell", "Drum", "Faux", "Gromm"}
	surnameB = []string{"wick", "ovar", "esk", "enholt", "ingly", "acq", "umbre", "ott", "isch", "avel", "ery", "anth"}
	streets  = []string{"Kestrelmoor Lane", "Ostwater Row", "Lantern Hill", "Saltmeadow Close", "Brennmark Quay", "Old Weir Road"}
)

func pick[T any](r *rand.Rand, xs []T) T { return xs[r.IntN(len(xs))] }

func offspring(r *rand.Rand) int {
	total := 0
	for _, w := range offspringWeight {
		total += w
	}
	u := r.IntN(total)
	for i, w := range offspringWeight {
		if u < w {
			return offspringCounts[i]
		}
		u -= w
	}
	return 0
}

// serialDays is a made-up serial interval of 2 to 10 days, peaked near 6.
func serialDays(r *rand.Rand) int { return 2 + r.IntN(5) + r.IntN(5) }

// outbreak grows generation by generation from imported cases until maxCases, keeping only
// onsets up to two days before the analysis date (later cases are not yet reported).
func outbreak(r *rand.Rand, imported, maxCases int) []person {
	var ps []person
	for i := 0; i < imported; i++ {
		ps = append(ps, person{onset: firstDay.AddDate(0, 0, 9*i+r.IntN(5)), parent: -1,
			place: "Household", district: pick(r, districts)})
	}
	for next := 0; next < len(ps) && len(ps) < maxCases; next++ {
		p := ps[next]
		for n := offspring(r); n > 0 && len(ps) < maxCases; n-- {
			onset := p.onset.AddDate(0, 0, serialDays(r))
			if onset.After(asOf.AddDate(0, 0, -2)) {
				continue
			}
			place := p.place
			if r.IntN(3) == 0 {
				place = pick(r, places)
			}
			district := p.district
			if r.IntN(5) == 0 {
				district = pick(r, districts)
			}
			ps = append(ps, person{onset: onset, parent: next, place: place, district: district, generation: p.generation + 1})
		}
	}
	return ps
}

// Rows returns the export's rows in the export's order (by report date, then reference).
func Rows() []Row {
	r := rand.New(rand.NewPCG(Seed, Seed^0x5eed))
	ps := outbreak(r, 5, 57)
	// References are given in order of onset, as the case-management system numbers them.
	order := make([]int, len(ps))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int { return ps[a].onset.Compare(ps[b].onset) })
	for n, i := range order {
		ps[i].ref = fmt.Sprintf("OV-26-%04d", 101+n)
	}
	var rows []Row
	for _, p := range ps {
		row := Row{
			Ref:      p.ref,
			Surname:  pick(r, surnameA) + pick(r, surnameB),
			Given:    pick(r, givenA) + pick(r, givenB),
			Phone:    fmt.Sprintf("+00 47 %03d %04d", 100+r.IntN(900), r.IntN(10000)),
			Address:  fmt.Sprintf("%d %s, %s", 1+r.IntN(120), pick(r, streets), p.district),
			Onset:    p.onset.Format("02.01.2006"),
			Reported: p.onset.AddDate(0, 0, 1+r.IntN(4)).Format("02.01.2006"),
			Place:    p.place,
			AgeBand:  pick(r, ageBands),
			District: p.district,
			Travel:   "no",
		}
		if p.parent >= 0 {
			row.Source = ps[p.parent].ref
		} else {
			row.Travel = "yes"
		}
		rows = append(rows, row)
	}

	// The deliberate problems.
	dup := rows[20]
	dup.Surname, dup.Given, dup.Phone = "Tobbesk", "Fenvel", "+00 47 318 2204"
	dup.Reported = "19.10.2026" // entered twice: the reader keeps the first row
	rows = append(rows, dup)
	bad := rows[len(rows)-10]
	bad.Ref, bad.Onset = "OV-26-0190", "31.11.2026" // no 31 November
	bad.Surname, bad.Given, bad.Phone = "Quirnott", "Ulosana", "+00 47 642 0917"
	rows = append(rows, bad)
	lost := rows[len(rows)-5]
	lost.Ref, lost.Source = "OV-26-0191", "OV-25-0877" // a case from last year's export
	lost.Surname, lost.Given, lost.Phone = "Strakery", "Morette", "+00 47 205 7731"
	rows = append(rows, lost)

	slices.SortStableFunc(rows, func(a, b Row) int {
		if c := strings.Compare(isoOf(a.Reported), isoOf(b.Reported)); c != 0 {
			return c
		}
		return strings.Compare(a.Ref, b.Ref)
	})
	return rows
}

// isoOf turns the export's DD.MM.YYYY into YYYY-MM-DD for sorting.
func isoOf(dmy string) string {
	p := strings.Split(dmy, ".")
	if len(p) != 3 {
		return dmy
	}
	return p[2] + "-" + p[1] + "-" + p[0]
}

// Write writes the export: semicolons, CRLF line ends as the invented system writes them.
// No field holds a semicolon, quote or line break, so no quoting is needed.
func Write(w io.Writer) error {
	bw := bufio.NewWriter(w)
	lines := [][]string{Header}
	for _, r := range Rows() {
		lines = append(lines, r.fields())
	}
	for _, l := range lines {
		for _, f := range l {
			if strings.ContainsAny(f, ";\"\r\n") {
				return fmt.Errorf("field %q would need quoting", f)
			}
		}
		if _, err := bw.WriteString(strings.Join(l, ";") + "\r\n"); err != nil {
			return err
		}
	}
	return bw.Flush()
}

func main() {
	out := flag.String("o", "", "output file (default standard output)")
	flag.Parse()
	if *out == "" {
		if err := Write(os.Stdout); err != nil {
			fmt.Fprintln(os.Stderr, "gen:", err)
			os.Exit(1)
		}
		return
	}
	tmp, err := os.CreateTemp(filepath.Dir(*out), ".gen-*")
	if err == nil {
		err = Write(tmp)
		if cerr := tmp.Close(); err == nil {
			err = cerr
		}
		if err == nil {
			err = os.Rename(tmp.Name(), *out)
		}
		if err != nil {
			os.Remove(tmp.Name())
		}
	}
	if err != nil {
		fmt.Fprintln(os.Stderr, "gen:", err)
		os.Exit(1)
	}
}
