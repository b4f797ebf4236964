package render

import (
	"fmt"
	"strconv"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
)

func init() {
	registerChart(chartDef{
		name: "outlook", order: 70,
		available: func(s *analysis.Summary) (bool, string) {
			return s.Outlook != nil && len(s.Outlook.Projection) > 0, "No projection was made in this run."
		},
		build: func(st *renderState) ([]chartSpec, string, error) { return st.chartOutlook(st.s.Outlook) },
	})
}

func (st *renderState) chartOutlook(o *analysis.Outlook) ([]chartSpec, string, error) {
	id := st.newChartID("outlook")
	f := &finite{}
	n := len(o.Projection)
	labels := make([]string, n)
	u90, u50, l50, l90, mean := make([]opts.LineData, n), make([]opts.LineData, n), make([]opts.LineData, n), make([]opts.LineData, n), make([]opts.LineData, n)
	for i, p := range o.Projection {
		labels[i] = "+" + strconv.Itoa(p.Generation)
		u90[i] = opts.LineData{Value: countValue(p.P90[1])}
		u50[i] = opts.LineData{Value: countValue(p.P50[1])}
		l50[i] = opts.LineData{Value: countValue(p.P50[0])}
		l90[i] = opts.LineData{Value: countValue(p.P90[0])}
		mean[i] = opts.LineData{Value: "-"}
		if p.Mean != nil {
			mean[i].Value = round(f.v(*p.Mean, "a projected mean"), 2)
		}
	}
	line := charts.NewLine()
	line.SetGlobalOptions(append(baseOpts(id, chartHeight, "axis", false),
		charts.WithXAxisOpts(opts.XAxis{Type: "category", Name: "Generations from now", NameLocation: "middle", NameGap: 28,
			SplitLine: &opts.SplitLine{Show: opts.Bool(false)}}),
		charts.WithYAxisOpts(yAxis("value", "New cases in that generation")))...)
	line.SetXAxis(labels)
	fanBands(line, u90, u50, l50, l90)
	line.AddSeries("Expected (mean)", mean, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.Symbol = "circle"
		s.SymbolSize = 6
		s.LineStyle = &opts.LineStyle{Width: 2.5, Color: colInk}
		s.ItemStyle = &opts.ItemStyle{Color: colInk}
	}))
	obj, err := finish("outlook", f, line, nil)
	caption := fmt.Sprintf("Starting from the %d cases still able to transmit. Dark band: 50%% of projected outcomes fall inside; light band: 90%%. Line: expected number.", o.Active)
	return one(chartSpec{ID: id, Title: "Projected cases in the next generations", Caption: caption, Height: chartHeight, Option: obj}, err)
}
