package linelist

import (
	"fmt"
	"strings"
)

// Column is one canonical column of a line list: everything the reader, the writers and the
// per-value reports need to know about it, in one place. The table of columns (Columns)
// drives header matching, the reader's positions, the canonical writer of package simulate
// and the choice of columns a batch of reports can be split by.
type Column struct {
	// Name is the canonical name, used in configs, messages and the canonical layout.
	Name string
	// Variants are the header spellings recognised without a config, folded (see
	// foldHeader) and best first: when two headers of a file match, the better wins.
	Variants []string
	// Required columns must be present for a file to be analysed.
	Required bool
	// Format writes a case's value as the reader reads it back ("" when not recorded).
	Format func(c *Case) string
	// Stratum, for the descriptive columns a report can be split or stratified by, returns
	// a case's value ("" when not recorded); it is nil for the others.
	Stratum func(c *Case) string
	// decode reads the column's trimmed cell into the row being built.
	decode func(rd *reader, r *rowState, v string)
}

// Canonical column names, in the order of the canonical layout.
const (
	ColCaseID       = "case_id"
	ColInfectorID   = "infector_id"
	ColOnsetDate    = "onset_date"
	ColReportDate   = "report_date"
	ColSetting      = "setting"
	ColAgeGroup     = "age_group"
	ColJurisdiction = "jurisdiction"
	ColImported     = "imported"
)

// columns is the table itself, read-only.
var columns = []Column{
	{
		Name:     ColCaseID,
		Variants: []string{"caseid", "caseidentifier", "casenumber", "caseno", "casenr", "caseref", "id"},
		Required: true,
		Format:   func(c *Case) string { return c.ID },
		decode:   decodeCaseID,
	},
	{
		Name:     ColInfectorID,
		Variants: []string{"infectorid", "infector", "infectorcaseid", "sourcecaseid", "sourcecase", "sourceid", "infectedby", "parentcaseid", "parentid"},
		Format:   func(c *Case) string { return c.InfectorID },
		decode:   decodeInfector,
	},
	{
		Name:     ColOnsetDate,
		Variants: []string{"onsetdate", "onset", "dateofonset", "symptomonset", "symptomonsetdate", "dateofsymptomonset", "onsetofsymptoms", "dateonset"},
		Required: true,
		Format:   func(c *Case) string { return c.Onset.String() },
		decode:   decodeOnset,
	},
	{
		Name:     ColReportDate,
		Variants: []string{"reportdate", "datereported", "dateofreport", "reported", "reportingdate", "notificationdate", "datenotified"},
		Format: func(c *Case) string {
			if !c.HasReport {
				return ""
			}
			return c.Report.String()
		},
		decode: decodeReport,
	},
	{
		Name:     ColSetting,
		Variants: []string{"setting", "exposuresetting", "transmissionsetting"},
		Format:   func(c *Case) string { return c.Setting },
		Stratum:  func(c *Case) string { return c.Setting },
		decode:   func(rd *reader, r *rowState, v string) { r.st.Setting = rd.stratum(v, ColSetting, r.line) },
	},
	{
		Name:     ColAgeGroup,
		Variants: []string{"agegroup", "ageband", "agecategory", "agegrp"},
		Format:   func(c *Case) string { return c.AgeGroup },
		Stratum:  func(c *Case) string { return c.AgeGroup },
		decode:   func(rd *reader, r *rowState, v string) { r.st.AgeGroup = rd.stratum(v, ColAgeGroup, r.line) },
	},
	{
		Name:     ColJurisdiction,
		Variants: []string{"jurisdiction", "region", "district"},
		Format:   func(c *Case) string { return c.Jurisdiction },
		Stratum:  func(c *Case) string { return c.Jurisdiction },
		decode:   func(rd *reader, r *rowState, v string) { r.st.Jurisdiction = rd.stratum(v, ColJurisdiction, r.line) },
	},
	{
		Name:     ColImported,
		Variants: []string{"imported", "importedcase", "isimported", "importation"},
		Format: func(c *Case) string {
			if c.Imported {
				return "yes"
			}
			return "no"
		},
		decode: decodeImported,
	},
}

// Columns returns the canonical columns in the order of the canonical layout.
func Columns() []Column { return append([]Column(nil), columns...) }

// ColumnNames returns the canonical column names in layout order.
func ColumnNames() []string {
	names := make([]string, len(columns))
	for i, c := range columns {
		names[i] = c.Name
	}
	return names
}

// ColumnNamed returns the canonical column of that name.
func ColumnNamed(name string) (Column, bool) {
	for _, c := range columns {
		if c.Name == name {
			return c, true
		}
	}
	return Column{}, false
}

// StratumColumns returns the names of the descriptive columns (those with a Stratum).
func StratumColumns() []string {
	var names []string
	for _, c := range columns {
		if c.Stratum != nil {
			names = append(names, c.Name)
		}
	}
	return names
}

// rowState is one data row while its cells are decoded, in column order.
type rowState struct {
	line   int
	c      Case
	st     Strata
	id     string // the raw case_id cell, cloned only if the row is kept
	reject bool
}

func decodeCaseID(rd *reader, r *rowState, id string) {
	switch {
	case id == "":
		r.reject = true
		rd.problem(r.line, ColCaseID, CodeMissingID, SeverityError, "case_id is blank; every row needs an identifier; row rejected")
	case rd.badText(id) != "":
		r.reject = true
		rd.problem(r.line, ColCaseID, CodeBadValue, SeverityError, "case_id "+rd.badText(id)+"; row rejected")
	}
	r.id = id
}

func decodeInfector(rd *reader, r *rowState, inf string) {
	if inf == "" {
		return
	}
	switch why := rd.badText(inf); {
	case why != "":
		rd.problem(r.line, ColInfectorID, CodeBadValue, SeverityError, "infector_id "+why+"; link dropped")
	case inf == r.id:
		r.c.InfectorID = inf // a self link, reported by forest; it will share the cloned ID
	default:
		r.c.InfectorID = strings.Clone(inf)
	}
}

func decodeOnset(rd *reader, r *rowState, onset string) {
	if onset == "" {
		r.reject = true
		rd.problem(r.line, ColOnsetDate, CodeBadDate, SeverityError, "onset_date is blank; every case needs an onset date; row rejected")
		return
	}
	d, err := ParseDate(onset, rd.in.DateFormat)
	if err != nil {
		r.reject = true
		rd.problem(r.line, ColOnsetDate, CodeBadDate, SeverityError, "onset_date: "+err.Error()+"; row rejected")
		return
	}
	r.c.Onset = d
	if rd.asOf != 0 && d > rd.asOf {
		rd.problem(r.line, ColOnsetDate, CodeFutureOnset, SeverityWarning, fmt.Sprintf("onset %s is after the analysis date %s; check the date (or the analysis date)", d, rd.asOf))
	}
}

func decodeReport(rd *reader, r *rowState, rep string) {
	if rep == "" {
		return
	}
	d, err := ParseDate(rep, rd.in.DateFormat)
	if err != nil {
		rd.problem(r.line, ColReportDate, CodeBadDate, SeverityError, "report_date: "+err.Error()+"; the report date was dropped and the case kept")
		return
	}
	r.c.Report, r.c.HasReport = d, true
}

func decodeImported(rd *reader, r *rowState, v string) {
	switch strings.ToLower(v) {
	case "", "no", "false", "0", "n":
	case "yes", "true", "1", "y":
		r.c.Imported = true
	default:
		rd.problem(r.line, ColImported, CodeBadValue, SeverityError, fmt.Sprintf("imported %q is not one of yes, no, true, false, 1, 0, y, n (or blank); the value was dropped and the case read as not imported", clip(v)))
	}
}
