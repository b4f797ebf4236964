package render

import (
	"fmt"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
)

func init() {
	registerChart(chartDef{
		name: "forecast", order: 12,
		available: func(s *analysis.Summary) (bool, string) {
			return s.Forecast != nil && len(s.Forecast.Weeks) > 0, "No forecast by week was made in this run."
		},
		build: func(st *renderState) ([]chartSpec, string, error) { return st.chartForecast(st.s.Forecast) },
	})
}

// forecastHistory is how many weeks of the epidemic curve the fan chart shows before the
// forecast.
const forecastHistory = 8

// chartForecast draws the cases by week as counted (the released epidemic curve's totals,
// withheld weeks left as gaps, the incomplete weeks lighter) followed by the forecast: its
// median and its 50% and 90% prediction bands.
func (st *renderState) chartForecast(fc *analysis.Forecast) ([]chartSpec, string, error) {
	id := st.newChartID("forecast")
	f := &finite{}
	var labels []string
	var counted []opts.BarData
	if e := st.s.EpiCurve; e != nil {
		from := max(0, len(e.Weeks)-forecastHistory)
		incomplete := st.incompleteWeeks(e)
		for i := from; i < len(e.Weeks); i++ {
			labels = append(labels, weekText(e.Weeks[i]))
			d := opts.BarData{Value: countValue(e.Total[i])}
			if incomplete[i] {
				d.ItemStyle = &opts.ItemStyle{Opacity: opts.Float(incompleteOpacity)}
			}
			counted = append(counted, d)
		}
	}
	past := len(labels)
	n := past + len(fc.Weeks)
	gap := func() []opts.LineData {
		out := make([]opts.LineData, n)
		for i := range out {
			out[i] = opts.LineData{Value: "-"}
		}
		return out
	}
	u90, u50, l50, l90, med := gap(), gap(), gap(), gap(), gap()
	for k, w := range fc.Weeks {
		labels = append(labels, weekText(w.WeekStart))
		counted = append(counted, opts.BarData{Value: "-"})
		i := past + k
		u90[i] = opts.LineData{Value: countValue(w.P90[1])}
		u50[i] = opts.LineData{Value: countValue(w.P50[1])}
		l50[i] = opts.LineData{Value: countValue(w.P50[0])}
		l90[i] = opts.LineData{Value: countValue(w.P90[0])}
		med[i] = opts.LineData{Value: countValue(w.Median)}
	}
	bar := charts.NewBar()
	bar.SetGlobalOptions(append(baseOpts(id, chartHeight, "axis", true),
		charts.WithXAxisOpts(xAxis("category", "ISO week of symptom onset")),
		charts.WithYAxisOpts(yAxis("value", "Cases")))...)
	bar.SetXAxis(labels)
	bar.AddSeries("Cases counted", counted, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.ItemStyle = &opts.ItemStyle{Color: colMuted}
		s.BarCategoryGap = "25%"
	}))
	line := charts.NewLine()
	fanBands(line, u90, u50, l50, l90)
	line.AddSeries("Forecast (median)", med, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.Symbol = "circle"
		s.SymbolSize = 6
		s.LineStyle = &opts.LineStyle{Width: 2.5, Color: colInk}
		s.ItemStyle = &opts.ItemStyle{Color: colInk}
	}))
	bar.Overlap(line)
	obj, err := finish("forecast", f, bar, func(obj map[string]any) {
		obj["legend"] = map[string]any{"top": 0, "left": "center", "data": []string{"Cases counted", "Forecast (median)"}}
	})
	caption := fmt.Sprintf("Grey bars: cases counted by week of onset (lighter: weeks not yet complete). Then the forecast, from %d simulations of the fitted process: line, the median; dark band, 50%% of simulations; light band, 90%%.", fc.Simulations)
	return one(chartSpec{ID: id, Title: "Cases by week: counted and forecast", Caption: caption, Height: chartHeight, Option: obj}, err)
}
