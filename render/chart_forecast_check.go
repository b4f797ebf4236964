package render

import (
	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
)

func init() {
	registerChart(chartDef{
		name: "forecast_check", order: 16,
		available: func(s *analysis.Summary) (bool, string) {
			return s.ForecastCheck != nil && len(s.ForecastCheck.Weeks) > 0, "No archived forecast covers a week that has passed."
		},
		build: func(st *renderState) ([]chartSpec, string, error) { return st.chartForecastCheck(st.s.ForecastCheck) },
	})
}

// chartForecastCheck draws each archived forecast of a past week, its 90% and 50% ranges and
// median, with the cases observed in the week.
func (st *renderState) chartForecastCheck(fc *analysis.ForecastCheck) ([]chartSpec, string, error) {
	id := st.newChartID("forecast_check")
	n := len(fc.Weeks)
	labels := make([]string, n)
	hi90, hi50, lo50, lo90 := make([]opts.LineData, n), make([]opts.LineData, n), make([]opts.LineData, n), make([]opts.LineData, n)
	med, obs := make([]opts.LineData, n), make([]opts.LineData, n)
	for i, w := range fc.Weeks {
		labels[i] = weekText(w.WeekStart) + " (from " + w.Made.String() + ")"
		hi90[i] = opts.LineData{Value: countValue(w.P90[1])}
		hi50[i] = opts.LineData{Value: countValue(w.P50[1])}
		lo50[i] = opts.LineData{Value: countValue(w.P50[0])}
		lo90[i] = opts.LineData{Value: countValue(w.P90[0])}
		med[i] = opts.LineData{Value: countValue(w.Median)}
		obs[i] = opts.LineData{Value: countValue(w.Observed)}
	}
	line := charts.NewLine()
	line.SetGlobalOptions(append(baseOpts(id, chartHeight, "axis", true),
		charts.WithXAxisOpts(xAxis("category", "ISO week of onset (report that forecast it)")),
		charts.WithYAxisOpts(yAxis("value", "cases with onset in the week")))...)
	line.SetXAxis(labels)
	fanBands(line, hi90, hi50, lo50, lo90)
	line.AddSeries("Forecast median", med, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.Symbol = "none"
		s.LineStyle = &opts.LineStyle{Width: 1.5, Type: "dashed", Color: "#1f5c6e"}
		s.ItemStyle = &opts.ItemStyle{Color: "#1f5c6e"}
	}))
	line.AddSeries("Observed", obs, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.Symbol = "circle"
		s.SymbolSize = 9
		s.LineStyle = &opts.LineStyle{Width: 0}
		s.ItemStyle = &opts.ItemStyle{Color: colAccent}
	}))
	obj, err := finish("forecast_check", &finite{}, line, func(obj map[string]any) {
		obj["legend"] = map[string]any{"top": 0, "left": "center", "data": []string{"Forecast median", "Observed"}}
	})
	caption := "Each earlier report's forecast for a week that has now ended: its 50% (dark) and 90% (light) prediction ranges and median, against the cases with onset in that week in this export. Late reports still add cases to recent weeks, so the latest observed counts may rise."
	return one(chartSpec{ID: id, Title: "How the earlier forecasts did", Caption: caption, Height: chartHeight, Option: obj}, err)
}
