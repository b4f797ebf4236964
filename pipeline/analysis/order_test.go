package analysis

import (
	"slices"
	"testing"

	"github.com/caseweave/caseweave/pipeline/linelist"
)

// Age groups read in age order, not text order; other columns keep text order.
func TestSortCategories(t *testing.T) {
	ages := []string{"65+", unknownLabel, "18-39", "5-17", "40-64", "0-4", "<1"}
	sortCategories(linelist.ColAgeGroup, ages)
	if want := []string{"0-4", "<1", "5-17", "18-39", "40-64", "65+", unknownLabel}; !slices.Equal(ages, want) {
		t.Errorf("age groups: got %v, want %v", ages, want)
	}
	settings := []string{"school", "household", "care home"}
	sortCategories(linelist.ColSetting, settings)
	if want := []string{"care home", "household", "school"}; !slices.Equal(settings, want) {
		t.Errorf("settings: got %v, want %v", settings, want)
	}
}
