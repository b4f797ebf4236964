package linelist

// Case is one row of a line list that survived validation, holding only the canonical columns.
// Columns outside the canonical set are never read into a Case, so personal data in an export
// (names, phone numbers, addresses) cannot travel further than the CSV reader.
//
// A Case is kept small (64 bytes plus its identifiers), because a national line list holds
// millions: the descriptive columns live in a Strata that every case with the same values
// shares, reached through the embedded pointer (c.Setting, c.AgeGroup, c.Jurisdiction).
type Case struct {
	ID         string // case_id, trimmed; unique within a LineList
	InfectorID string // infector_id, trimmed; "" when unknown, index or imported
	Onset      Day    // onset_date
	Report     Day    // report_date; meaningful only when HasReport
	HasReport  bool
	Imported   bool   // imported yes/no; blank reads as no
	Source     uint16 // index in LineList.Sources of the file the row came from
	Row        int    // 1-based physical line (CSV, header = line 1) or spreadsheet row (workbook)
	*Strata           // never nil in a Case from Read; see NoStrata
}

// Strata are a case's descriptive columns; "" is not recorded.
type Strata struct {
	Setting      string
	AgeGroup     string
	Jurisdiction string
}

// NoStrata is the Strata of a case with none of the descriptive columns recorded. Code that
// builds Cases itself sets it (or its own Strata) so that c.Setting never dereferences nil.
func NoStrata() *Strata { return &Strata{} }
