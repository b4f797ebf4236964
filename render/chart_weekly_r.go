package render

import (
	"fmt"
	"math"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
)

func init() {
	registerChart(chartDef{
		name: "weekly_r", order: 100,
		available: func(s *analysis.Summary) (bool, string) {
			return len(s.TimeVarying) > 0, "No weekly reproduction numbers were computed."
		},
		build: func(st *renderState) ([]chartSpec, string, error) { return st.chartWeeklyR(st.s.TimeVarying) },
	})
}

func (st *renderState) chartWeeklyR(ws []analysis.WeekR) ([]chartSpec, string, error) {
	id := st.newChartID("weekly_r")
	f := &finite{}
	n := len(ws)
	labels := make([]string, n)
	up, lo := make([]opts.LineData, n), make([]opts.LineData, n)
	done, recent := make([]opts.LineData, n), make([]opts.LineData, n)
	firstCensored := -1
	var plotted []*float64
	for _, w := range ws {
		plotted = append(plotted, w.R, w.Lower, w.Upper)
	}
	span := logSpanAroundOne(plotted)
	// onAxis keeps a value on the logarithmic axis: one below its foot (an R of 0, a lower
	// bound of 0) is drawn at the foot.
	onAxis := func(v any) any {
		if x, ok := v.(float64); ok {
			return round(math.Min(math.Max(x, 1/span), span), 3)
		}
		return v
	}
	floored := false
	for i, w := range ws {
		labels[i] = weekText(w.WeekStart)
		up[i] = opts.LineData{Value: onAxis(f.p(w.Upper, "an upper bound"))}
		lo[i] = opts.LineData{Value: onAxis(f.p(w.Lower, "a lower bound"))}
		if w.R != nil && *w.R < 1/span {
			floored = true
		}
		r := onAxis(f.p(w.R, "a weekly R")) // null when the release withheld the week
		done[i], recent[i] = opts.LineData{Value: "-"}, opts.LineData{Value: "-"}
		if w.Censored {
			recent[i].Value = r
			if firstCensored < 0 {
				firstCensored = i
			}
		} else {
			done[i].Value = r
		}
	}
	ya := yAxis("log", "R (mean offspring), logarithmic scale")
	ya.Min, ya.Max = round(1/span, 4), span
	line := charts.NewLine()
	line.SetGlobalOptions(append(baseOpts(id, chartHeight, "axis", true),
		charts.WithXAxisOpts(xAxis("category", "ISO week of the infector's onset")),
		charts.WithYAxisOpts(ya))...)
	line.SetXAxis(labels)
	bandSeries(line, "Interval, upper end", up, colBand90)
	bandSeries(line, "Interval, lower end", lo, "#ffffff")
	marks := []any{markLineY("R = 1", 1, colAccent)}
	line.AddSeries("R, complete weeks", done, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.Symbol = "circle"
		s.SymbolSize = 7
		s.LineStyle = &opts.LineStyle{Width: 2, Color: "#1f5c6e"}
		s.ItemStyle = &opts.ItemStyle{Color: "#1f5c6e"}
		s.MarkLines = &opts.MarkLines{Data: marks, MarkLineStyle: opts.MarkLineStyle{Symbol: []string{"none", "none"}}}
		if firstCensored >= 0 {
			s.MarkAreas = &opts.MarkAreas{Data: []any{[]any{
				map[string]any{"xAxis": labels[firstCensored], "name": "still counting"},
				map[string]any{"xAxis": labels[n-1]},
			}}, MarkAreaStyle: opts.MarkAreaStyle{ItemStyle: &opts.ItemStyle{Color: "rgba(156,74,61,0.07)"}}}
		}
	}))
	line.AddSeries("R, recent weeks (incomplete)", recent, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.Symbol = "emptyCircle"
		s.SymbolSize = 8
		s.LineStyle = &opts.LineStyle{Width: 1.5, Type: "dashed", Color: colAccent}
		s.ItemStyle = &opts.ItemStyle{Color: colAccent}
	}))
	obj, err := finish("weekly_r", f, line, func(obj map[string]any) {
		obj["legend"] = map[string]any{"top": 0, "left": "center", "data": []string{"R, complete weeks", "R, recent weeks (incomplete)"}}
	})
	caption := fmt.Sprintf("Mean number infected by cases with onset in each week, with its %s interval (shaded), on a logarithmic axis centred on R = 1, so that halving and doubling look alike. The shaded weeks at the right are recent: their cases may still infect others, so their R is an undercount.", st.levelText())
	if floored {
		caption += fmt.Sprintf(" An R below %s (a week whose cases infected no one) is drawn at the foot of the axis.", formatNumber(1/span, 2))
	}
	return one(chartSpec{ID: id, Title: "Reproduction number by week", Caption: caption, Height: chartHeight, Option: obj}, err)
}

// logSpanAroundOne is the factor F of a logarithmic R axis from 1/F to F, centred on 1: the
// smallest of 2, 4, 10, 20 and 100 that holds every positive value given (values at or
// below zero, and beyond 100 either way, are drawn at the axis ends).
func logSpanAroundOne(vals []*float64) float64 {
	need := 1.0
	for _, v := range vals {
		if v == nil || *v <= 0 {
			continue
		}
		need = math.Max(need, math.Max(*v, 1 / *v))
	}
	for _, f := range []float64{2, 4, 10, 20} {
		if need <= f {
			return f
		}
	}
	return 100
}
