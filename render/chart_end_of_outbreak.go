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
			e := s.EndOfOutbreak
			if e != nil && e.NotYet != "" {
				return false, "The end-of-outbreak curve cannot be read yet: " + e.NotYet + "."
			}
			return e != nil && len(e.Curve) > 0, "No end-of-outbreak curve was computed."
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
	if lo, hi, ok := eooBand(e, f); ok {
		for _, b := range []struct {
			name string
			data []opts.LineData
		}{{"Lower end of the " + st.levelText() + " range", lo}, {"Upper end of the " + st.levelText() + " range", hi}} {
			line.AddSeries(b.name, b.data, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
				s.ShowSymbol = opts.Bool(false)
				s.LineStyle = &opts.LineStyle{Width: 1.2, Color: "#1f5c6e", Type: "dashed", Opacity: opts.Float(0.8)}
				s.ItemStyle = &opts.ItemStyle{Color: "#1f5c6e"}
			}))
		}
	}
	// Room at the right for half of the last date label, which is centred on its tick.
	obj, err := finish("end_of_outbreak", f, line, gridRight(48))
	caption := "The chance that no further case follows, given the cases so far, the fitted offspring distribution and the serial interval, if no new case is reported by that date; the dashed lines bound the range over the bootstrap replicates."
	return one(chartSpec{ID: id, Title: "Chance the outbreak is over", Caption: caption, Height: chartHeight, Option: obj}, err)
}

// eooBand is the replicate band of the curve as two series in percent; ok is false when any
// day lacks it.
func eooBand(e *analysis.EndOfOutbreak, f *finite) (lo, hi []opts.LineData, ok bool) {
	for _, p := range e.Curve {
		if p.Lower == nil || p.Upper == nil {
			return nil, nil, false
		}
		lo = append(lo, opts.LineData{Value: round(100*f.v(*p.Lower, "a probability"), 2)})
		hi = append(hi, opts.LineData{Value: round(100*f.v(*p.Upper, "a probability"), 2)})
	}
	return lo, hi, len(lo) > 0
}
