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
		name: "offspring", order: 20,
		available: func(s *analysis.Summary) (bool, string) {
			return s.Offspring != nil && len(s.Offspring.Histogram) > 0, "No offspring counts were available."
		},
		build: func(st *renderState) ([]chartSpec, string, error) { return st.chartOffspring(st.s.Offspring) },
	})
}

func (st *renderState) chartOffspring(o *analysis.Offspring) ([]chartSpec, string, error) {
	id := st.newChartID("offspring")
	f := &finite{}
	labels := make([]string, len(o.Histogram))
	obs := make([]opts.BarData, len(o.Histogram))
	for i, c := range o.Histogram {
		labels[i] = strconv.Itoa(i)
		obs[i] = opts.BarData{Value: c}
	}
	bar := charts.NewBar()
	bar.SetGlobalOptions(append(baseOpts(id, chartHeight, "axis", true),
		charts.WithXAxisOpts(xAxis("category", "Number of people a case infected")),
		charts.WithYAxisOpts(yAxis("value", "Cases")))...)
	bar.SetXAxis(labels)
	bar.AddSeries("Observed", obs, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.ItemStyle = &opts.ItemStyle{Color: colLight, BorderColor: colMuted, BorderWidth: 1}
		s.BarCategoryGap = "20%"
	}))
	for _, m := range o.Models {
		data := make([]opts.LineData, len(o.Histogram))
		for i := range data {
			data[i] = opts.LineData{Value: "-"}
			if i < len(m.Expected) {
				data[i] = opts.LineData{Value: round(f.v(m.Expected[i], "expected count of "+m.Name), 3)}
			}
		}
		line := charts.NewLine()
		line.AddSeries("Expected, "+modelName(m.Name), data, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
			s.Symbol = "circle"
			s.SymbolSize = 5
		}))
		bar.Overlap(line)
	}
	obj, err := finish("offspring", f, bar, nil)
	caption := fmt.Sprintf("Bars: number of cases (of %d counted) that infected 0, 1, 2, … others. Lines: counts each fitted model expects.", o.N)
	return one(chartSpec{ID: id, Title: "Offspring distribution with fitted models", Caption: caption, Height: chartHeight, Option: obj}, err)
}
