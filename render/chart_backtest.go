package render

import (
	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
)

func init() {
	registerChart(chartDef{
		name: "backtest", order: 13,
		available: func(s *analysis.Summary) (bool, string) {
			return s.Backtest != nil && len(s.Backtest.Forecasts) > 0, "No past forecast could be scored."
		},
		build: func(st *renderState) ([]chartSpec, string, error) { return st.chartBacktest(st.s.Backtest) },
	})
}

// chartBacktest draws each week's one-week-ahead forecast from the replayed analysis date
// (median, 50% and 90% bands) against the cases later observed with onset in that week.
func (st *renderState) chartBacktest(bt *analysis.Backtest) ([]chartSpec, string, error) {
	id := st.newChartID("backtest")
	f := &finite{}
	var labels []string
	var u90, u50, l50, l90, med, obs []opts.LineData
	for _, w := range bt.Forecasts {
		if w.Horizon != 1 {
			continue
		}
		labels = append(labels, weekText(w.WeekStart))
		u90 = append(u90, opts.LineData{Value: countValue(w.P90[1])})
		u50 = append(u50, opts.LineData{Value: countValue(w.P50[1])})
		l50 = append(l50, opts.LineData{Value: countValue(w.P50[0])})
		l90 = append(l90, opts.LineData{Value: countValue(w.P90[0])})
		med = append(med, opts.LineData{Value: countValue(w.Median)})
		obs = append(obs, opts.LineData{Value: w.Observed})
	}
	if len(labels) == 0 {
		return nil, "No forecast one week ahead could be scored.", nil
	}
	line := charts.NewLine()
	line.SetGlobalOptions(append(baseOpts(id, chartHeight, "axis", true),
		charts.WithXAxisOpts(xAxis("category", "ISO week of symptom onset")),
		charts.WithYAxisOpts(yAxis("value", "Cases")))...)
	line.SetXAxis(labels)
	fanBands(line, u90, u50, l50, l90)
	line.AddSeries("Forecast a week before (median)", med, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.LineStyle = &opts.LineStyle{Width: 2, Color: colInk, Type: "dashed"}
		s.ItemStyle = &opts.ItemStyle{Color: colInk}
	}))
	line.AddSeries("Cases observed", obs, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.Symbol = "circle"
		s.SymbolSize = 8
		s.LineStyle = &opts.LineStyle{Width: 0, Opacity: opts.Float(0)}
		s.ItemStyle = &opts.ItemStyle{Color: colAccent}
	}))
	obj, err := finish("backtest", f, line, func(obj map[string]any) {
		obj["legend"] = map[string]any{"top": 0, "left": "center", "data": []string{"Forecast a week before (median)", "Cases observed"}}
	})
	caption := "For each week, the forecast the line list as known in the week before would have given (line: median; dark band: 50% range; light band: 90%), and the cases later observed with onset that week (dots). Weeks with a small count are left out."
	return one(chartSpec{ID: id, Title: "Past forecasts against what followed", Caption: caption, Height: chartHeight, Option: obj}, err)
}
