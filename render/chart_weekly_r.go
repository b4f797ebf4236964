package render

import (
	"fmt"

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
	for i, w := range ws {
		labels[i] = weekText(w.WeekStart)
		up[i] = opts.LineData{Value: f.p(w.Upper, "an upper bound")}
		lo[i] = opts.LineData{Value: f.p(w.Lower, "a lower bound")}
		r := f.p(w.R, "a weekly R") // null when the release withheld the week
		if v, ok := r.(float64); ok {
			r = round(v, 3)
		}
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
	line := charts.NewLine()
	line.SetGlobalOptions(append(baseOpts(id, chartHeight, "axis", true),
		charts.WithXAxisOpts(xAxis("category", "ISO week of the infector's onset")),
		charts.WithYAxisOpts(yAxis("value", "R (mean offspring)")))...)
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
	caption := fmt.Sprintf("Mean number infected by cases with onset in each week, with its %s interval (shaded). The shaded weeks at the right are recent: their cases may still infect others, so their R is an undercount.", st.levelText())
	return one(chartSpec{ID: id, Title: "Reproduction number by week", Caption: caption, Height: chartHeight, Option: obj}, err)
}
