package render

import (
	"fmt"
	"slices"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
)

func init() {
	registerChart(chartDef{
		name: "epicurve", order: 10,
		available: func(s *analysis.Summary) (bool, string) {
			return s.EpiCurve != nil && len(s.EpiCurve.Weeks) > 0, "No onset dates were available to draw cases over time."
		},
		build: func(st *renderState) ([]chartSpec, string, error) { return st.chartEpiCurve(st.s.EpiCurve) },
	})
}

func (st *renderState) chartEpiCurve(e *analysis.EpiCurve) ([]chartSpec, string, error) {
	id := st.newChartID("epicurve")
	f := &finite{}
	labels := make([]string, len(e.Weeks))
	for i, w := range e.Weeks {
		labels[i] = weekText(w)
	}
	if len(e.Total) != len(e.Weeks) {
		return nil, "", fmt.Errorf("chart %q: %d weeks but %d totals", "epicurve", len(e.Weeks), len(e.Total))
	}
	bar := charts.NewBar()
	bar.SetGlobalOptions(append(baseOpts(id, chartHeight, "axis", true),
		charts.WithXAxisOpts(xAxis("category", "ISO week of symptom onset")),
		charts.WithYAxisOpts(yAxis("value", "Cases")))...)
	bar.SetXAxis(labels)
	incomplete := st.incompleteWeeks(e)
	// bar is one week's bar: a week not yet complete is drawn lighter.
	barOf := func(i int, v any) opts.BarData {
		d := opts.BarData{Value: v}
		if incomplete[i] {
			d.ItemStyle = &opts.ItemStyle{Opacity: opts.Float(incompleteOpacity)}
		}
		return d
	}
	known := make([]int, len(e.Weeks))
	for _, sr := range e.Series {
		if len(sr.Counts) != len(e.Weeks) {
			return nil, "", fmt.Errorf("chart %q: series %q has %d counts for %d weeks", "epicurve", sr.Name, len(sr.Counts), len(e.Weeks))
		}
		data := make([]opts.BarData, len(sr.Counts))
		drawn := false
		for i, c := range sr.Counts {
			data[i] = barOf(i, countValue(c))
			if c != nil {
				known[i] += *c
				drawn = drawn || *c > 0
			}
		}
		if !drawn {
			continue // every count of it is withheld or zero: no bar, so no legend entry
		}
		colour := st.categoryColour(sr.Name)
		bar.AddSeries(sr.Name, data, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
			s.Stack = "cases"
			s.ItemStyle = &opts.ItemStyle{Color: colour}
		}))
	}
	// The counts withheld in a week whose total is shown are drawn together in grey: the
	// release keeps their sum at the threshold or above. A week whose total is withheld
	// draws no height for what is withheld; a mark at its foot says so.
	small := make([]opts.BarData, len(e.Weeks))
	anySmall, anyWithheld := false, false
	var withheldBands []any
	for i := range e.Weeks {
		small[i] = opts.BarData{Value: "-"}
		switch {
		case e.Total[i] == nil:
			anyWithheld = true
			withheldBands = append(withheldBands, []any{map[string]any{"xAxis": labels[i], "name": withheldText}, map[string]any{"xAxis": labels[i]}})
		case *e.Total[i] > known[i]:
			anySmall = true
			small[i] = barOf(i, *e.Total[i]-known[i])
		}
	}
	if anySmall || anyWithheld || len(e.Series) == 0 {
		n := "Small groups, combined"
		if len(e.Series) == 0 {
			n = "All cases"
		}
		bar.AddSeries(n, small, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
			s.Stack = "cases"
			s.ItemStyle = &opts.ItemStyle{Color: colMuted}
			if len(e.Series) == 0 {
				s.ItemStyle = nil
			}
			if anyWithheld {
				s.MarkAreas = &opts.MarkAreas{Data: withheldBands, MarkAreaStyle: opts.MarkAreaStyle{
					ItemStyle: &opts.ItemStyle{Color: "rgba(139,147,156,0.16)"},
					Label:     &opts.Label{Show: opts.Bool(true), Position: "insideBottom", Color: colMuted, FontSize: 9}}}
			}
		}))
	}
	obj, err := finish("epicurve", f, bar, nil)
	caption := "Each bar is one ISO week (Monday to Sunday) of symptom onset, stacked by setting."
	if slices.Contains(incomplete, true) {
		caption += " Lighter bars are weeks not complete on the analysis date: later reports will add to them."
	}
	if anySmall {
		caption += fmt.Sprintf(" Counts withheld to protect privacy (fewer than %d cases, and the counts that would let them be worked out) are combined in grey.", st.threshold())
	}
	if anyWithheld {
		caption += " Shaded weeks are withheld altogether: too few cases to show."
	}
	return one(chartSpec{ID: id, Title: "Cases by week of symptom onset", Caption: caption, Height: chartHeight, Option: obj}, err)
}

// incompleteOpacity is how a week not yet complete is drawn: lighter, so that it does not
// read as a fall.
const incompleteOpacity = 0.4

// incompleteWeeks marks the weeks of the epidemic curve from the Assessment's first
// incomplete week on.
func (st *renderState) incompleteWeeks(e *analysis.EpiCurve) []bool {
	out := make([]bool, len(e.Weeks))
	if as := st.s.Assessment; as != nil && as.IncompleteFrom != nil {
		for i, w := range e.Weeks {
			out[i] = w >= *as.IncompleteFrom
		}
	}
	return out
}
