package render

import (
	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
)

func init() {
	registerChart(chartDef{
		name: "backfill", order: 15,
		available: func(s *analysis.Summary) (bool, string) {
			return s.Backfill != nil && len(s.Backfill.Reports) > 1 && len(s.Backfill.Weeks) > 0, "The run archive holds no earlier report of this jurisdiction."
		},
		build: func(st *renderState) ([]chartSpec, string, error) { return st.chartBackfill(st.s.Backfill) },
	})
}

// chartBackfill draws each report's count of each onset week, one line a report, this one
// last and in the accent colour: where a later line lies above an earlier one, cases were
// reported late.
func (st *renderState) chartBackfill(b *analysis.Backfill) ([]chartSpec, string, error) {
	id := st.newChartID("backfill")
	labels := make([]string, len(b.Weeks))
	for i, w := range b.Weeks {
		labels[i] = weekText(w)
	}
	line := charts.NewLine()
	line.SetGlobalOptions(append(baseOpts(id, chartHeight, "axis", true),
		charts.WithXAxisOpts(xAxis("category", "ISO week of onset")),
		charts.WithYAxisOpts(yAxis("value", "cases with onset in the week")))...)
	line.SetXAxis(labels)
	cols := palette()
	last := len(b.Reports) - 1
	names := make([]string, len(b.Reports))
	for k, r := range b.Reports {
		data := make([]opts.LineData, len(b.Weeks))
		for i, c := range r.Counts {
			data[i] = opts.LineData{Value: countValue(c)}
		}
		names[k] = "report of " + r.AsOf.String()
		color, width := cols[k%len(cols)], float32(1.5)
		if k == last {
			names[k] = "this report (" + r.AsOf.String() + ")"
			color, width = colAccent, 2.5
		}
		line.AddSeries(names[k], data, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
			s.Symbol = "circle"
			s.SymbolSize = 5
			s.LineStyle = &opts.LineStyle{Width: width, Color: color}
			s.ItemStyle = &opts.ItemStyle{Color: color}
		}))
	}
	obj, err := finish("backfill", &finite{}, line, func(obj map[string]any) {
		obj["legend"] = map[string]any{"top": 0, "left": "center", "data": names}
	})
	caption := "The cases with onset in each week as each report of this jurisdiction counted them. A week's count that rises from one report to the next had cases reported late; the last weeks of each report are the least complete. A gap is a count that report withholds or a week that had not begun."
	return one(chartSpec{ID: id, Title: "Each week's count as each report knew it", Caption: caption, Height: chartHeight, Option: obj}, err)
}
