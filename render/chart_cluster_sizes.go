package render

import (
	"strconv"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
)

func init() {
	registerChart(chartDef{
		name: "cluster_sizes", order: 60,
		available: func(s *analysis.Summary) (bool, string) {
			return s.Clusters != nil && len(s.Clusters.SizeHistogram) > 0, "No cluster sizes were available."
		},
		build: func(st *renderState) ([]chartSpec, string, error) { return st.chartClusterSizes(st.s.Clusters) },
	})
}

func (st *renderState) chartClusterSizes(c *analysis.Clusters) ([]chartSpec, string, error) {
	id := st.newChartID("cluster_sizes")
	f := &finite{}
	labels := make([]string, len(c.SizeHistogram))
	done := make([]opts.BarData, len(c.SizeHistogram))
	growing := make([]opts.BarData, len(c.SizeHistogram))
	expected := make([]opts.LineData, len(c.SizeHistogram))
	anyExp := false
	for i, sc := range c.SizeHistogram {
		labels[i] = strconv.Itoa(sc.Size)
		done[i] = opts.BarData{Value: sc.Count - sc.Censored}
		growing[i] = opts.BarData{Value: sc.Censored}
		expected[i] = opts.LineData{Value: "-"}
		if sc.Expected != nil {
			anyExp = true
			expected[i] = opts.LineData{Value: round(f.v(*sc.Expected, "an expected count"), 3)}
		}
	}
	bar := charts.NewBar()
	bar.SetGlobalOptions(append(baseOpts(id, chartHeight, "axis", true),
		charts.WithXAxisOpts(xAxis("category", "Cases in the chain")),
		charts.WithYAxisOpts(yAxis("value", "Chains")))...)
	bar.SetXAxis(labels)
	bar.AddSeries("Chains, complete", done, charts.WithSeriesOpts(func(s *charts.SingleSeries) { s.Stack = "chains" }))
	bar.AddSeries("Chains, still growing", growing, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.Stack = "chains"
		s.ItemStyle = &opts.ItemStyle{Color: colBand90}
	}))
	if anyExp {
		line := charts.NewLine()
		line.AddSeries("Expected by the chain-size model", expected, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
			s.Symbol = "circle"
			s.SymbolSize = 5
			s.ItemStyle = &opts.ItemStyle{Color: colAccent}
			s.LineStyle = &opts.LineStyle{Color: colAccent}
		}))
		bar.Overlap(line)
	}
	obj, err := finish("cluster_sizes", f, bar, nil)
	caption := "How many chains reached each size. Chains with a case inside the censoring window may still grow."
	return one(chartSpec{ID: id, Title: "Sizes of transmission chains", Caption: caption, Height: chartHeight, Option: obj}, err)
}
