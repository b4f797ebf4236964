package render

import (
	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
)

func init() {
	registerChart(chartDef{
		name: "trend", order: 14,
		available: func(s *analysis.Summary) (bool, string) {
			return len(s.Trend) > 1, "The run archive holds no earlier report of this jurisdiction."
		},
		build: func(st *renderState) ([]chartSpec, string, error) { return st.chartTrend(st.s.Trend) },
	})
}

// trendPanel is one estimate of the trend charts.
type trendPanel struct {
	title, axis, caption string
	of                   func(analysis.TrendPoint) *analysis.Span
	refOne               bool // draw the line at 1 (R)
}

// chartTrend draws each key estimate by analysis date with its interval, one small chart
// each: R, the recent R, k, the chance the current chains die out, and the next week's
// forecast.
func (st *renderState) chartTrend(ts []analysis.TrendPoint) ([]chartSpec, string, error) {
	lvl := st.levelText()
	panels := []trendPanel{
		{"R by report", "R", "R from each report, with its " + lvl + " interval (shaded).", func(t analysis.TrendPoint) *analysis.Span { return &t.R }, true},
		{"Recent R by report", "recent R", "The latest complete week's R in each report, with its " + lvl + " interval.", func(t analysis.TrendPoint) *analysis.Span { return &t.RecentR }, true},
		{"k by report", "k (dispersion)", "The dispersion k from each report, with its " + lvl + " interval; smaller k means transmission more concentrated in few cases. A report in the Poisson limit has no finite k.", func(t analysis.TrendPoint) *analysis.Span { return &t.K }, false},
		{"Chance the current chains die out, by report", "probability", "The probability that every chain under way dies out on its own, from each report, with its " + lvl + " interval.", func(t analysis.TrendPoint) *analysis.Span { return &t.DieOut }, false},
		{"Next week's forecast, by report", "cases with onset", "The forecast each report made for the week after its analysis date: median and 90% prediction interval.", func(t analysis.TrendPoint) *analysis.Span { return t.NextWeek }, false},
	}
	var out []chartSpec
	for _, p := range panels {
		spec, ok, err := st.trendChart(ts, p)
		if err != nil {
			return nil, "", err
		}
		if ok {
			out = append(out, spec)
		}
	}
	if len(out) == 0 {
		return nil, "No estimate was made in more than one report.", nil
	}
	return out, "", nil
}

func (st *renderState) trendChart(ts []analysis.TrendPoint, p trendPanel) (chartSpec, bool, error) {
	f := &finite{}
	n := len(ts)
	labels := make([]string, n)
	est, up, lo := make([]opts.LineData, n), make([]opts.LineData, n), make([]opts.LineData, n)
	known := 0
	for i, t := range ts {
		labels[i] = t.AsOf.String()
		sp := p.of(t)
		if sp == nil {
			sp = &analysis.Span{}
		}
		if sp.Estimate != nil {
			known++
		}
		est[i] = opts.LineData{Value: rounded(f.p(sp.Estimate, "an estimate"))}
		up[i] = opts.LineData{Value: rounded(f.p(sp.Upper, "an upper bound"))}
		lo[i] = opts.LineData{Value: rounded(f.p(sp.Lower, "a lower bound"))}
	}
	if known < 2 {
		return chartSpec{}, false, nil
	}
	id := st.newChartID("trend")
	line := charts.NewLine()
	line.SetGlobalOptions(append(baseOpts(id, chartHeight, "axis", false),
		charts.WithXAxisOpts(xAxis("category", "analysis date of the report")),
		charts.WithYAxisOpts(yAxis("value", p.axis)))...)
	line.SetXAxis(labels)
	bandSeries(line, "Interval, upper end", up, colBand90)
	bandSeries(line, "Interval, lower end", lo, "#ffffff")
	line.AddSeries(p.axis, est, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.Symbol = "circle"
		s.SymbolSize = 7
		s.LineStyle = &opts.LineStyle{Width: 2, Color: "#1f5c6e"}
		s.ItemStyle = &opts.ItemStyle{Color: "#1f5c6e"}
		if p.refOne {
			s.MarkLines = &opts.MarkLines{Data: []any{markLineY("1", 1, colAccent)}, MarkLineStyle: opts.MarkLineStyle{Symbol: []string{"none", "none"}}}
		}
	}))
	obj, err := finish("trend", f, line, nil)
	if err != nil {
		return chartSpec{}, false, err
	}
	return chartSpec{ID: id, Title: p.title, Caption: p.caption, Height: chartHeight, Option: obj}, true, nil
}

// rounded is a chart value to 3 decimals; "-" (no value) stays.
func rounded(v any) any {
	if x, ok := v.(float64); ok {
		return round(x, 3)
	}
	return v
}
