package render

import (
	"slices"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
)

func init() {
	registerChart(chartDef{
		name: "end_of_outbreak", order: 110,
		available: func(s *analysis.Summary) (bool, string) {
			return s.EndOfOutbreak != nil && len(s.EndOfOutbreak.Curve) > 0, "No end-of-outbreak curve was computed."
		},
		build: func(st *renderState) ([]chartSpec, string, error) { return st.chartEndOfOutbreak(st.s.EndOfOutbreak) },
	})
}

func (st *renderState) chartEndOfOutbreak(e *analysis.EndOfOutbreak) ([]chartSpec, string, error) {
	id := st.newChartID("end_of_outbreak")
	f := &finite{}
	labels := make([]string, len(e.Curve))
	data := make([]opts.LineData, len(e.Curve))
	for i, p := range e.Curve {
		labels[i] = p.Date.String()
		data[i] = opts.LineData{Value: round(100*f.v(p.Probability, "a probability"), 2)}
	}
	marks := []any{markLineYAt("95%", 95, colMuted, "insideStartBottom"), markLineYAt("99%", 99, colMuted, "insideStartTop")}
	inRange := func(s string) bool { return slices.Contains(labels, s) }
	if rt := st.ruleOfThumb(); rt != nil && inRange(rt.Date.String()) {
		marks = append(marks, map[string]any{"name": "rule of thumb", "xAxis": rt.Date.String(),
			"lineStyle": map[string]any{"color": colAccent, "type": "dashed"}, "label": map[string]any{"formatter": "2 × incubation", "color": colAccent}})
	}
	line := charts.NewLine()
	ya := yAxis("value", "Chance of no further cases (%)")
	ya.Min, ya.Max = 0, 100
	line.SetGlobalOptions(append(baseOpts(id, chartHeight, "axis", false),
		charts.WithXAxisOpts(xAxis("category", "Date")),
		charts.WithYAxisOpts(ya))...)
	line.SetXAxis(labels)
	line.AddSeries("Chance of no further cases (%)", data, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.ShowSymbol = opts.Bool(false)
		s.LineStyle = &opts.LineStyle{Width: 2.5, Color: "#1f5c6e"}
		s.ItemStyle = &opts.ItemStyle{Color: "#1f5c6e"}
		s.MarkLines = &opts.MarkLines{Data: marks, MarkLineStyle: opts.MarkLineStyle{Symbol: []string{"none", "none"}}}
	}))
	obj, err := finish("end_of_outbreak", f, line, nil)
	caption := "The chance that no further case follows, given the cases so far, the fitted offspring distribution and the serial interval, if no new case is reported by that date."
	return one(chartSpec{ID: id, Title: "Chance the outbreak is over", Caption: caption, Height: chartHeight, Option: obj}, err)
}
