package render

import (
	"fmt"
	"strconv"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/caseweave/caseweave/pipeline/offspring"
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
	bins := offspringBins(len(o.Histogram))
	hist := make([]int, len(bins))
	labels := make([]string, len(bins))
	obs := make([]opts.BarData, len(bins))
	for b, r := range bins {
		for x := r[0]; x <= r[1]; x++ {
			hist[b] += o.Histogram[x]
		}
		labels[b] = strconv.Itoa(r[0])
		if r[1] > r[0] {
			labels[b] += "–" + strconv.Itoa(r[1])
		}
		obs[b] = opts.BarData{Value: hist[b]}
	}
	logScale := st.offspringLogScale(hist)
	ya := yAxis("value", "Cases")
	if logScale {
		// Counts from 1 up; a model's expectation below a tenth of a case is not drawn.
		ya.Type, ya.Min = "log", logFloor
		for b, c := range hist {
			if c == 0 {
				obs[b] = opts.BarData{Value: "-"}
			}
		}
	}
	bar := charts.NewBar()
	bar.SetGlobalOptions(append(baseOpts(id, chartHeight, "axis", true),
		charts.WithXAxisOpts(xAxis("category", "Number of people a case infected")),
		charts.WithYAxisOpts(ya))...)
	bar.SetXAxis(labels)
	if logScale {
		// ECharts starts bars on a logarithmic axis at 1, where a count of 1 (the tail this
		// scale is for) would have no height: the counts are drawn as marks instead.
		marks := make([]opts.LineData, len(obs))
		for i := range obs {
			marks[i] = opts.LineData{Value: obs[i].Value}
		}
		dots := charts.NewLine()
		dots.AddSeries("Observed", marks, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
			s.Symbol = "rect"
			s.SymbolSize = 11
			s.LineStyle = &opts.LineStyle{Width: 0, Opacity: opts.Float(0)}
			s.ItemStyle = &opts.ItemStyle{Color: colInk}
		}))
		bar.Overlap(dots)
	} else {
		bar.AddSeries("Observed", obs, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
			s.ItemStyle = &opts.ItemStyle{Color: colLight, BorderColor: colMuted, BorderWidth: 1}
			s.BarCategoryGap = "20%"
		}))
	}
	for k, m := range o.Models {
		data := make([]opts.LineData, len(bins))
		for b, r := range bins {
			data[b] = opts.LineData{Value: "-"}
			if r[0] >= len(m.Expected) {
				continue
			}
			sum := 0.0
			for x := r[0]; x <= r[1] && x < len(m.Expected); x++ {
				sum += f.v(m.Expected[x], "expected count of "+m.Name)
			}
			if v := round(sum, 3); !logScale || v >= logFloor {
				data[b] = opts.LineData{Value: v}
			}
		}
		style := modelStyle(m.Name, k)
		line := charts.NewLine()
		line.AddSeries("Expected, "+modelName(m.Name), data, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
			s.Symbol = style.symbol
			s.SymbolSize = 6
			s.LineStyle = &opts.LineStyle{Color: style.colour, Type: style.dash, Width: 2}
			s.ItemStyle = &opts.ItemStyle{Color: style.colour}
		}))
		bar.Overlap(line)
	}
	obj, err := finish("offspring", f, bar, nil)
	caption := fmt.Sprintf("Bars: number of cases (of %d counted) that infected 0, 1, 2, … others. Lines: counts each fitted model expects.", o.N)
	if logScale {
		caption = fmt.Sprintf("Squares: number of cases (of %d counted) that infected 0, 1, 2, … others; none is drawn where no case did. Lines: counts each fitted model expects. The count axis is logarithmic, so that the few cases that infected many stay visible; an expectation below 0.1 cases is not drawn.", o.N)
	}
	if len(bins) < len(o.Histogram) {
		caption += fmt.Sprintf(" Beyond %d, counts are grouped in ranges that double in width.", offspringSingleBars-1)
	}
	return one(chartSpec{ID: id, Title: "Offspring distribution with fitted models", Caption: caption, Height: chartHeight, Option: obj}, err)
}

// logFloor is the foot of a logarithmic count axis.
const logFloor = 0.1

// offspringLogScale decides the count axis of the offspring chart: config.yaml's
// offspring_scale ("log" or "linear"), else logarithmic when the tail is long, that is when
// the tallest bar is at least longTail times the shortest bar above zero (on a linear axis
// such a bar is under a pixel or two high at the chart's height; the ratio is common
// practice for choosing a log axis, not a published rule).
func (st *renderState) offspringLogScale(hist []int) bool {
	switch st.cfg.OffspringScale {
	case "log":
		return true
	case "linear":
		return false
	}
	const longTail = 50
	tallest, shortest := 0, 0
	for _, c := range hist {
		if c > 0 {
			tallest = max(tallest, c)
			if shortest == 0 || c < shortest {
				shortest = c
			}
		}
	}
	return shortest > 0 && tallest >= longTail*shortest
}

// lineStyle is how one fitted model is drawn: its own colour, dash and symbol, so that
// models stay apart on screen and in greyscale print.
type lineStyle struct{ colour, dash, symbol string }

// modelStyle is the style of a fitted model by its name; a model without one of its own
// takes a palette colour by its place k among the fits.
func modelStyle(name string, k int) lineStyle {
	switch name {
	case offspring.NameNegativeBinomial:
		return lineStyle{"#1f5c6e", "solid", "circle"}
	case offspring.NamePoisson:
		return lineStyle{colAccent, "dashed", "triangle"}
	case offspring.NameGeometric:
		return lineStyle{"#c4893a", "dotted", "rect"}
	}
	pal := categoryPalette()
	return lineStyle{pal[k%len(pal)], "solid", "diamond"}
}

// offspringSingleBars is how many offspring counts (0, 1, …) the chart draws one by one;
// beyond them a long tail is grouped in ranges that double in width, so a chart of a case
// that infected half a million people has some forty bars, not half a million.
const offspringSingleBars = 31

// offspringBins are the inclusive ranges of offspring counts the chart draws, over counts
// 0..n−1.
func offspringBins(n int) [][2]int {
	var out [][2]int
	for x := 0; x < n && x < offspringSingleBars; x++ {
		out = append(out, [2]int{x, x})
	}
	for lo, w := offspringSingleBars, offspringSingleBars+1; lo < n; lo, w = lo+w, 2*w {
		out = append(out, [2]int{lo, min(lo+w-1, n-1)})
	}
	return out
}
