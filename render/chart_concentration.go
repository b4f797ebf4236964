package render

import (
	"math"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
)

func init() {
	registerChart(chartDef{
		name: "concentration", order: 40,
		available: func(s *analysis.Summary) (bool, string) {
			return s.Offspring != nil && len(s.Offspring.Concentration) >= 2, "No transmission was observed, so there is no concentration curve."
		},
		build: func(st *renderState) ([]chartSpec, string, error) { return st.chartConcentration(st.s.Offspring) },
	})
}

func (st *renderState) chartConcentration(o *analysis.Offspring) ([]chartSpec, string, error) {
	id := st.newChartID("concentration")
	f := &finite{}
	data := make([]opts.LineData, len(o.Concentration))
	x80 := math.NaN()
	for i, p := range o.Concentration {
		x, y := f.v(p.X, "a curve point"), f.v(p.Y, "a curve point")
		data[i] = opts.LineData{Value: []float64{round(100*x, 2), round(100*y, 2)}}
		if i > 0 && math.IsNaN(x80) {
			q := o.Concentration[i-1]
			if q.Y < 0.8 && y >= 0.8 && y > q.Y {
				x80 = q.X + (0.8-q.Y)*(x-q.X)/(y-q.Y)
			}
		}
	}
	if o.ShareCausing80pctObserved != nil {
		x80 = f.v(*o.ShareCausing80pctObserved, "the observed 80% share")
	}
	marks := []any{markLineY("80% of transmission", 80, colAccent)}
	if !math.IsNaN(x80) {
		marks = append(marks, markLineX(formatNumber(100*x80, 0)+"% of cases", round(100*x80, 2), true, colAccent))
	}
	line := charts.NewLine()
	pctAxis := func(n string) opts.XAxis {
		return opts.XAxis{Type: "value", Name: n, NameLocation: "middle", NameGap: 28, Min: 0, Max: 100,
			SplitLine: &opts.SplitLine{Show: opts.Bool(false)}}
	}
	ya := yAxis("value", "% of all transmission")
	ya.Min, ya.Max = 0, 100
	line.SetGlobalOptions(append(baseOpts(id, 320, "axis", true),
		charts.WithXAxisOpts(pctAxis("% of cases, largest spreaders first")),
		charts.WithYAxisOpts(ya))...)
	line.AddSeries("Observed", data, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.ShowSymbol = opts.Bool(false)
		s.LineStyle = &opts.LineStyle{Width: 2.5}
		s.MarkLines = &opts.MarkLines{Data: marks, MarkLineStyle: opts.MarkLineStyle{Symbol: []string{"none", "none"}}}
	}))
	line.AddSeries("Everyone equal", []opts.LineData{{Value: []float64{0, 0}}, {Value: []float64{100, 100}}},
		charts.WithSeriesOpts(func(s *charts.SingleSeries) {
			s.ShowSymbol = opts.Bool(false)
			s.LineStyle = &opts.LineStyle{Type: "dotted", Color: colMuted, Width: 1.5}
			s.ItemStyle = &opts.ItemStyle{Color: colMuted}
		}))
	obj, err := finish("concentration", f, line, nil)
	caption := "Cases are ranked from the one who infected most people to those who infected none. The further the curve bows above the dotted diagonal, the more transmission came from a few cases."
	return one(chartSpec{ID: id, Title: "Concentration of transmission", Caption: caption, Height: 320, Option: obj}, err)
}
