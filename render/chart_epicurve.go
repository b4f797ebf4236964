package render

import (
	"fmt"

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
	known := make([]int, len(e.Weeks))
	for _, sr := range e.Series {
		if len(sr.Counts) != len(e.Weeks) {
			return nil, "", fmt.Errorf("chart %q: series %q has %d counts for %d weeks", "epicurve", sr.Name, len(sr.Counts), len(e.Weeks))
		}
		data := make([]opts.BarData, len(sr.Counts))
		for i, c := range sr.Counts {
			data[i] = opts.BarData{Value: countValue(c)}
			if c != nil {
				known[i] += *c
			}
		}
		bar.AddSeries(sr.Name, data, charts.WithSeriesOpts(func(s *charts.SingleSeries) { s.Stack = "cases" }))
	}
	small := make([]opts.BarData, len(e.Weeks))
	anySmall := false
	for i := range e.Weeks {
		d := e.Total[i] - known[i]
		if d > 0 {
			anySmall = true
			small[i] = opts.BarData{Value: d}
		} else {
			small[i] = opts.BarData{Value: "-"}
		}
	}
	if anySmall || len(e.Series) == 0 {
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
		}))
	}
	obj, err := finish("epicurve", f, bar, nil)
	caption := "Each bar is one ISO week (Monday to Sunday) of symptom onset, stacked by setting."
	if anySmall {
		caption += fmt.Sprintf(" Settings with fewer than %d cases in a week are combined in grey so that no small group can be picked out.", st.cfg.suppress())
	}
	return one(chartSpec{ID: id, Title: "Cases by week of symptom onset", Caption: caption, Height: chartHeight, Option: obj}, err)
}
