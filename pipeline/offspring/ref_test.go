package offspring

import (
	"encoding/csv"
	"os"
	"path/filepath"
	"strconv"
	"testing"
)

// refDir holds the reference values made by testdata/offspring/make_reference.R
// (R 4.2.2, MASS 7.3-58.2, boot 1.3-28.1; see versions.txt there).
var refDir = filepath.Join("..", "..", "testdata", "offspring")

func readTable(t *testing.T, name string) FreqTable {
	t.Helper()
	rows := readCSV(t, name+".csv")
	m := map[int]int{}
	for _, r := range rows[1:] {
		v, err1 := strconv.Atoi(r[0])
		c, err2 := strconv.Atoi(r[1])
		if err1 != nil || err2 != nil {
			t.Fatalf("%s.csv: bad row %v", name, r)
		}
		m[v] = c
	}
	return FromMap(m)
}

// readReference returns dataset → quantity → value from reference.csv.
func readReference(t *testing.T) map[string]map[string]float64 {
	t.Helper()
	out := map[string]map[string]float64{}
	for _, r := range readCSV(t, "reference.csv")[1:] {
		v, err := strconv.ParseFloat(r[2], 64)
		if err != nil {
			t.Fatalf("reference.csv: bad value in %v", r)
		}
		if out[r[0]] == nil {
			out[r[0]] = map[string]float64{}
		}
		out[r[0]][r[1]] = v
	}
	return out
}

func readCSV(t *testing.T, name string) [][]string {
	t.Helper()
	f, err := os.Open(filepath.Join(refDir, name))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	return rows
}

func ref(t *testing.T, r map[string]map[string]float64, ds, q string) float64 {
	t.Helper()
	v, ok := r[ds][q]
	if !ok {
		t.Fatalf("reference.csv has no %s/%s", ds, q)
	}
	return v
}
