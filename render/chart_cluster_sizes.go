package render

import (
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
	// Sizes run from 1 to the largest chain with long gaps: a logarithmic size axis keeps
	// their spacing true (a category axis would put 24 next to 58) and the small sizes apart.
	done := make([]opts.BarData, len(c.SizeHistogram))
	all := make([]opts.BarData, len(c.SizeHistogram))
	expected := make([]opts.LineData, len(c.SizeHistogram))
	anyExp := false
	largest := 1
	for i, sc := range c.SizeHistogram {
		largest = max(largest, sc.Size)
		done[i] = opts.BarData{Value: []any{sc.Size, sc.Count - sc.Censored}}
		all[i] = opts.BarData{Value: []any{sc.Size, sc.Count}}
		expected[i] = opts.LineData{Value: []any{sc.Size, "-"}}
		if sc.Expected != nil {
			anyExp = true
			expected[i] = opts.LineData{Value: []any{sc.Size, round(f.v(*sc.Expected, "an expected count"), 3)}}
		}
	}
	xa := xAxis("log", "Cases in the chain (logarithmic scale)")
	xa.Min, xa.Max = 0.8, niceLogMax(largest)
	bar := charts.NewBar()
	bar.SetGlobalOptions(append(baseOpts(id, chartHeight, "axis", true),
		charts.WithXAxisOpts(xa),
		charts.WithYAxisOpts(yAxis("value", "Chains")))...)
	// ECharts stacks bars on a category axis only, so each size draws its whole count in a
	// light bar and the complete chains over it in a dark one: the light part left showing
	// is the chains still growing.
	bar.AddSeries("All chains (light part: still growing)", all, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.BarWidth = "7"
		s.BarGap = "-100%"
		s.ItemStyle = &opts.ItemStyle{Color: colBand90}
	}))
	bar.AddSeries("Chains, complete", done, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.BarWidth = "7"
		s.BarGap = "-100%"
		s.ItemStyle = &opts.ItemStyle{Color: "#1f5c6e"}
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
	obj, err := finish("cluster_sizes", f, bar, func(obj map[string]any) {
		obj["tooltip"] = map[string]any{"show": true, "trigger": "item"}
	})
	caption := "How many chains reached each size, on a logarithmic size axis. Chains with a case inside the censoring window may still grow."
	return one(chartSpec{ID: id, Title: "Sizes of transmission chains", Caption: caption, Height: chartHeight, Option: obj}, err)
}

// niceLogMax is the end of a logarithmic axis a little beyond x: the next of 1, 2, 5 times
// a power of ten.
func niceLogMax(x int) float64 {
	for p := 1.0; ; p *= 10 {
		for _, m := range []float64{1, 2, 5} {
			if m*p > float64(x) {
				return m * p
			}
		}
	}
}
