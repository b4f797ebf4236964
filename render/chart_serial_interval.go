package render

import (
	"fmt"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
)

func init() {
	registerChart(chartDef{
		name: "serial_interval", order: 90,
		available: func(s *analysis.Summary) (bool, string) {
			return s.SerialInterval != nil && len(s.SerialInterval.Histogram) > 0, "No serial intervals were available."
		},
		build: func(st *renderState) ([]chartSpec, string, error) { return st.chartSerialInterval(st.s.SerialInterval) },
	})
}

func (st *renderState) chartSerialInterval(si *analysis.SerialInterval) ([]chartSpec, string, error) {
	id := st.newChartID("serial_interval")
	f := &finite{}
	data := make([]opts.BarData, len(si.Histogram))
	for i, h := range si.Histogram {
		data[i] = opts.BarData{Value: []any{h.Days, h.Count}}
		if h.Days < 0 {
			data[i].ItemStyle = &opts.ItemStyle{Color: colAccent}
		}
	}
	bar := charts.NewBar()
	bar.SetGlobalOptions(append(baseOpts(id, chartHeight, "axis", true),
		charts.WithXAxisOpts(opts.XAxis{Type: "value", Name: "Days from infector's onset to infectee's onset", NameLocation: "middle", NameGap: 28,
			SplitLine: &opts.SplitLine{Show: opts.Bool(false)}, MinInterval: 1}),
		charts.WithYAxisOpts(func() opts.YAxis {
			y := yAxis("value", "Pairs")
			y.AxisLine = &opts.AxisLine{OnZero: opts.Bool(false)}
			return y
		}()))...)
	bar.AddSeries("Observed pairs", data, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.BarWidth = "80%"
		s.ItemStyle = &opts.ItemStyle{Color: colBand50}
	}))
	if len(si.Density) > 0 {
		dens := make([]opts.LineData, len(si.Density))
		for i, p := range si.Density {
			// density × pairs = expected pairs per one-day bin
			dens[i] = opts.LineData{Value: []float64{round(f.v(p.X, "a density point"), 3), round(f.v(p.Y, "a density point")*float64(si.N), 3)}}
		}
		line := charts.NewLine()
		line.AddSeries("Fitted "+modelName(si.BestModel), dens, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
			s.ShowSymbol = opts.Bool(false)
			s.Smooth = opts.Bool(true)
			s.LineStyle = &opts.LineStyle{Width: 2, Color: colInk}
			s.ItemStyle = &opts.ItemStyle{Color: colInk}
		}))
		bar.Overlap(line)
	}
	obj, err := finish("serial_interval", f, bar, nil)
	caption := fmt.Sprintf("%d infector–infectee pairs with both onset dates. Red bars: the infectee fell ill first (%d pairs). Line: the fitted %s distribution scaled to the number of pairs.", si.N, si.Negative, modelName(si.BestModel))
	return one(chartSpec{ID: id, Title: "Serial interval", Caption: caption, Height: chartHeight, Option: obj}, err)
}
