package render

import (
	"fmt"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
)

func init() {
	registerChart(chartDef{
		name: "nowcast", order: 11,
		available: func(s *analysis.Summary) (bool, string) {
			if s.Nowcast == nil || len(s.Nowcast.Weeks) == 0 {
				return false, "No nowcast: the list has too few report dates to measure the delay from onset to report."
			}
			return true, ""
		},
		build: func(st *renderState) ([]chartSpec, string, error) { return st.chartNowcast(st.s.Nowcast) },
	})
}

// chartNowcast draws the recent weeks of the epidemic curve as the cases listed (grey)
// with the cases still expected to be reported stacked on them (pale accent), and the
// 90% prediction interval of each week's final count as a bar from its lower to its upper
// end, so that the correction stands apart from what was counted.
func (st *renderState) chartNowcast(nc *analysis.Nowcast) ([]chartSpec, string, error) {
	id := st.newChartID("nowcast")
	f := &finite{}
	var labels []string
	var listed, missing []opts.BarData
	var lo, hi []opts.LineData
	for _, w := range nc.Weeks {
		labels = append(labels, weekText(w.WeekStart))
		listed = append(listed, opts.BarData{Value: countValue(w.Observed)})
		more := 0.0
		if w.Observed != nil {
			more = max(0, w.Expected-float64(*w.Observed))
		}
		missing = append(missing, opts.BarData{Value: round(f.v(more, "the expected late reports"), 1)})
		lo = append(lo, opts.LineData{Value: w.P90[0]})
		hi = append(hi, opts.LineData{Value: w.P90[1]})
	}
	bar := charts.NewBar()
	bar.SetGlobalOptions(append(baseOpts(id, chartHeight, "axis", true),
		charts.WithXAxisOpts(xAxis("category", "ISO week of symptom onset")),
		charts.WithYAxisOpts(yAxis("value", "Cases")))...)
	bar.SetXAxis(labels)
	bar.AddSeries("Cases listed", listed, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.Stack = "cases"
		s.ItemStyle = &opts.ItemStyle{Color: colMuted}
		s.BarCategoryGap = "25%"
	}))
	bar.AddSeries("Still to be reported (nowcast)", missing, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.Stack = "cases"
		s.ItemStyle = &opts.ItemStyle{Color: colAccent, Opacity: opts.Float(incompleteOpacity), BorderColor: colAccent, BorderWidth: 1}
	}))
	line := charts.NewLine()
	for _, s := range []struct {
		name string
		v    []opts.LineData
	}{{"90% range, lower end", lo}, {"90% range, upper end", hi}} {
		line.AddSeries(s.name, s.v, charts.WithSeriesOpts(func(ss *charts.SingleSeries) {
			ss.Symbol = "rect"
			ss.SymbolSize = 10
			ss.LineStyle = &opts.LineStyle{Width: 0, Opacity: opts.Float(0)}
			ss.ItemStyle = &opts.ItemStyle{Color: colInk}
		}))
	}
	bar.Overlap(line)
	obj, err := finish("nowcast", f, bar, func(obj map[string]any) {
		obj["legend"] = map[string]any{"top": 0, "left": "center", "data": []string{"Cases listed", "Still to be reported (nowcast)"}}
	})
	caption := fmt.Sprintf("Grey: cases in the list by week of onset. Pale red, stacked on them: the cases with onset that week expected to be reported later, from the delay between onset and report in %d cases with both dates, corrected for the reports not yet in. Black marks: the 90%% prediction interval of the week's final count.", nc.DelayCases)
	return one(chartSpec{ID: id, Title: "Recent weeks: listed and still to be reported", Caption: caption, Height: chartHeight, Option: obj}, err)
}
