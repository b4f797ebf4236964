package render

import (
	"encoding/json"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
	"github.com/go-echarts/go-echarts/v2/types"

	"github.com/caseweave/caseweave/pipeline/analysis"
)

// Chart geometry: 680 CSS px is the width of an A4 page between 15 mm margins at 96 dpi, so a
// chart prints at the size it is drawn on screen.
const (
	chartWidth  = 680
	chartHeight = 300
	maxTrees    = 4
)

// caseweave's chart palette: muted, distinguishable in greyscale print, not any library's theme.
func palette() opts.Colors {
	return opts.Colors{"#1f5c6e", "#c4893a", "#5e6f96", "#9c4a3d", "#6f8d5e", "#7b5d88", "#b7a17a", "#8b939c"}
}

const (
	colInk    = "#26323a"
	colMuted  = "#8b939c"
	colLight  = "#d8dde1"
	colAccent = "#9c4a3d"
	colBand90 = "#cfe0e5"
	colBand50 = "#93b8c3"
	fontStack = `system-ui, -apple-system, "Segoe UI", "Helvetica Neue", Arial, sans-serif`
)

// chartSpec is one drawn chart: its element ID, captions and the ECharts option.
type chartSpec struct {
	ID      string
	Title   string
	Caption string
	Height  int
	Option  map[string]any
}

// ChartNames lists the charts a template can ask for with chart "name", in report order.
func ChartNames() []string {
	return []string{"epicurve", "offspring", "bootstrap_r", "bootstrap_k", "concentration", "trees",
		"cluster_sizes", "outlook", "age_mixing", "serial_interval", "weekly_r", "end_of_outbreak"}
}

func isChartName(n string) bool { return slices.Contains(ChartNames(), n) }

// finite collects the numbers a chart is built from and remembers the first non-finite one;
// go-echarts would otherwise emit an empty option without a word.
type finite struct {
	bad  bool
	what string
}

func (f *finite) v(x float64, what string) float64 {
	if !f.bad && (math.IsNaN(x) || math.IsInf(x, 0)) {
		f.bad, f.what = true, what
	}
	return x
}

func (f *finite) p(x *float64, what string) any {
	if x == nil {
		return "-"
	}
	return f.v(*x, what)
}

func (st *renderState) newChartID(name string) string {
	st.chartSeq++
	return "cw_" + name + "_" + strconv.Itoa(st.chartSeq)
}

func baseOpts(id string, height int, trigger string, legend bool) []charts.GlobalOpts {
	return []charts.GlobalOpts{
		charts.WithInitializationOpts(opts.Initialization{ChartID: id, Width: strconv.Itoa(chartWidth) + "px",
			Height: strconv.Itoa(height) + "px", Renderer: "canvas"}),
		charts.WithAnimation(false),
		charts.WithTooltipOpts(opts.Tooltip{Show: opts.Bool(true), Trigger: trigger}),
		charts.WithLegendOpts(opts.Legend{Show: opts.Bool(legend), Top: "0", Left: "center"}),
		charts.WithColorsOpts(palette()),
		charts.WithGridOpts(opts.Grid{Left: "40", Right: "28", Top: "44", Bottom: "36", ContainLabel: opts.Bool(true)}),
	}
}

func xAxis(typ, name string) opts.XAxis {
	return opts.XAxis{Type: typ, Name: name, NameLocation: "middle", NameGap: 28,
		SplitLine: &opts.SplitLine{Show: opts.Bool(false)}}
}

func yAxis(typ, name string) opts.YAxis {
	return opts.YAxis{Type: typ, Name: name, NameLocation: "middle", NameGap: 40,
		SplitLine: &opts.SplitLine{Show: opts.Bool(true), LineStyle: &opts.LineStyle{Color: "#e6e9ec"}}}
}

// chartValidator is what every go-echarts chart offers.
type chartValidator interface {
	Validate()
	JSON() map[string]interface{}
}

// finish validates the chart, takes its option as a map (the tested-safe path: Validate, then
// JSON, placed by html/template inside our own script element), applies caseweave's text
// style and checks that it encodes.
func finish(name string, f *finite, c chartValidator, patch func(map[string]any)) (map[string]any, error) {
	if f.bad {
		return nil, fmt.Errorf("chart %q: %s is not a finite number", name, f.what)
	}
	c.Validate()
	obj := c.JSON()
	obj["textStyle"] = map[string]any{"fontFamily": fontStack, "color": colInk}
	obj["backgroundColor"] = "transparent"
	delete(obj, "toolbox")
	if patch != nil {
		patch(obj)
	}
	if _, err := json.Marshal(obj); err != nil {
		return nil, fmt.Errorf("chart %q: %w", name, err)
	}
	return obj, nil
}

func (st *renderState) fnHas(name string) (bool, error) {
	if isChartName(name) {
		specs, _, err := st.buildChart(name)
		st.chartSeq -= len(specs) // a probe; keep IDs as if it had not run
		return len(specs) > 0, err
	}
	_, ok, err := st.buildTable(name, cellFmt{})
	return ok, err
}

func (st *renderState) fnChart(name string) (mdText, error) {
	if !isChartName(name) {
		return "", errorf("chart: unknown chart %q (known: %s)", name, strings.Join(ChartNames(), ", "))
	}
	if st.charts != nil && !slices.Contains(st.charts, name) {
		return mdText("\n\n*" + escapeMarkdown("This chart was left out of this report.") + "*\n\n"), nil
	}
	specs, note, err := st.buildChart(name)
	if err != nil {
		return "", err
	}
	if len(specs) == 0 {
		return mdText("\n\n*" + escapeMarkdown(note) + "*\n\n"), nil
	}
	return st.marker(&block{kind: blockChart, charts: specs}), nil
}

// buildChart builds the named chart from Summary fields only. With no data it returns a
// short note instead.
func (st *renderState) buildChart(name string) ([]chartSpec, string, error) {
	s := st.s
	switch name {
	case "epicurve":
		if s.EpiCurve == nil || len(s.EpiCurve.Weeks) == 0 {
			return nil, "No onset dates were available to draw cases over time.", nil
		}
		return st.chartEpiCurve(s.EpiCurve)
	case "offspring":
		if s.Offspring == nil || len(s.Offspring.Histogram) == 0 {
			return nil, "No offspring counts were available.", nil
		}
		return st.chartOffspring(s.Offspring)
	case "bootstrap_r", "bootstrap_k":
		o := s.Offspring
		if o == nil {
			return nil, "No bootstrap replicates were available.", nil
		}
		b, e, label := o.ReplicatesR, o.R, "R"
		if name == "bootstrap_k" {
			b, e, label = o.ReplicatesK, o.K, "k"
		}
		if b == nil || len(b.Counts) == 0 {
			return nil, "No bootstrap replicates were available for " + label + ".", nil
		}
		return st.chartBootstrap(name, label, b, e)
	case "concentration":
		if s.Offspring == nil || len(s.Offspring.Concentration) < 2 {
			return nil, "No transmission was observed, so there is no concentration curve.", nil
		}
		return st.chartConcentration(s.Offspring)
	case "trees":
		if s.Clusters == nil || len(s.Clusters.Largest) == 0 {
			return nil, "No linked transmission chains to draw.", nil
		}
		return st.chartTrees(s.Clusters)
	case "cluster_sizes":
		if s.Clusters == nil || len(s.Clusters.SizeHistogram) == 0 {
			return nil, "No cluster sizes were available.", nil
		}
		return st.chartClusterSizes(s.Clusters)
	case "outlook":
		if s.Outlook == nil || len(s.Outlook.Projection) == 0 {
			return nil, "No projection was made in this run.", nil
		}
		return st.chartOutlook(s.Outlook)
	case "age_mixing":
		if s.AgeMixing == nil || len(s.AgeMixing.Groups) == 0 {
			return nil, "No age groups were recorded for linked cases.", nil
		}
		return st.chartAgeMixing(s.AgeMixing)
	case "serial_interval":
		if s.SerialInterval == nil || len(s.SerialInterval.Histogram) == 0 {
			return nil, "No serial intervals were available.", nil
		}
		return st.chartSerialInterval(s.SerialInterval)
	case "weekly_r":
		if len(s.TimeVarying) == 0 {
			return nil, "No weekly reproduction numbers were computed.", nil
		}
		return st.chartWeeklyR(s.TimeVarying)
	case "end_of_outbreak":
		if s.EndOfOutbreak == nil || len(s.EndOfOutbreak.Curve) == 0 {
			return nil, "No end-of-outbreak curve was computed.", nil
		}
		return st.chartEndOfOutbreak(s.EndOfOutbreak)
	}
	return nil, "", errorf("chart: unknown chart %q", name)
}

func one(c chartSpec, err error) ([]chartSpec, string, error) {
	if err != nil {
		return nil, "", err
	}
	return []chartSpec{c}, "", nil
}

func countValue(c *int) any {
	if c == nil {
		return "-"
	}
	return *c
}

func (st *renderState) chartEpiCurve(e *analysis.EpiCurve) ([]chartSpec, string, error) {
	id := st.newChartID("epicurve")
	f := &finite{}
	labels := make([]string, len(e.Weeks))
	for i, w := range e.Weeks {
		labels[i] = weekText(w)
	}
	if len(e.Total) != len(e.Weeks) {
		return nil, "", fmt.Errorf("chart %q: %d weeks but %d totals", "epicurve", len(e.Weeks), len(e.Total))
	}
	bar := charts.NewBar()
	bar.SetGlobalOptions(append(baseOpts(id, chartHeight, "axis", true),
		charts.WithXAxisOpts(xAxis("category", "ISO week of symptom onset")),
		charts.WithYAxisOpts(yAxis("value", "Cases")))...)
	bar.SetXAxis(labels)
	known := make([]int, len(e.Weeks))
	for _, sr := range e.Series {
		if len(sr.Counts) != len(e.Weeks) {
			return nil, "", fmt.Errorf("chart %q: series %q has %d counts for %d weeks", "epicurve", sr.Name, len(sr.Counts), len(e.Weeks))
		}
		data := make([]opts.BarData, len(sr.Counts))
		for i, c := range sr.Counts {
			data[i] = opts.BarData{Value: countValue(c)}
			if c != nil {
				known[i] += *c
			}
		}
		bar.AddSeries(sr.Name, data, charts.WithSeriesOpts(func(s *charts.SingleSeries) { s.Stack = "cases" }))
	}
	small := make([]opts.BarData, len(e.Weeks))
	anySmall := false
	for i := range e.Weeks {
		d := e.Total[i] - known[i]
		if d > 0 {
			anySmall = true
			small[i] = opts.BarData{Value: d}
		} else {
			small[i] = opts.BarData{Value: "-"}
		}
	}
	if anySmall || len(e.Series) == 0 {
		n := "Small groups, combined"
		if len(e.Series) == 0 {
			n = "All cases"
		}
		bar.AddSeries(n, small, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
			s.Stack = "cases"
			s.ItemStyle = &opts.ItemStyle{Color: colMuted}
			if len(e.Series) == 0 {
				s.ItemStyle = nil
			}
		}))
	}
	obj, err := finish("epicurve", f, bar, nil)
	caption := "Each bar is one ISO week (Monday to Sunday) of symptom onset, stacked by setting."
	if anySmall {
		caption += fmt.Sprintf(" Settings with fewer than %d cases in a week are combined in grey so that no small group can be picked out.", st.cfg.suppress())
	}
	return one(chartSpec{ID: id, Title: "Cases by week of symptom onset", Caption: caption, Height: chartHeight, Option: obj}, err)
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

// round keeps chart data short and stable in print.
func round(x float64, digits int) float64 {
	p := math.Pow(10, float64(digits))
	return math.Round(x*p) / p
}

func markLineX(name string, x float64, dashed bool, color string) map[string]any {
	ls := map[string]any{"color": color, "width": 1.5, "type": "solid"}
	if dashed {
		ls["type"] = "dashed"
	}
	label := map[string]any{"formatter": name, "color": color}
	if dashed {
		// Interval bounds are labelled along their line, so a bound close to the estimate
		// does not print over the estimate's label above the plot.
		label["position"] = "insideEndTop"
	}
	return map[string]any{"name": name, "xAxis": x, "lineStyle": ls, "label": label}
}

func markLineY(name string, y float64, color string) map[string]any {
	return markLineYAt(name, y, color, "insideEndTop")
}

func markLineYAt(name string, y float64, color, position string) map[string]any {
	return map[string]any{"name": name, "yAxis": y,
		"lineStyle": map[string]any{"color": color, "width": 1, "type": "dashed"},
		"label":     map[string]any{"formatter": name, "color": color, "position": position}}
}

func (st *renderState) chartBootstrap(name, label string, b *analysis.Bins, e analysis.Estimate) ([]chartSpec, string, error) {
	id := st.newChartID(name)
	f := &finite{}
	if len(b.Edges) != len(b.Counts)+1 {
		return nil, "", fmt.Errorf("chart %q: %d bin edges for %d counts", name, len(b.Edges), len(b.Counts))
	}
	data := make([]opts.BarData, len(b.Counts))
	for i, c := range b.Counts {
		mid := (f.v(b.Edges[i], "a bin edge") + f.v(b.Edges[i+1], "a bin edge")) / 2
		data[i] = opts.BarData{Value: []any{round(mid, 4), c}}
	}
	var marks []any
	if e.Estimate != nil {
		marks = append(marks, markLineX("estimate", f.v(*e.Estimate, "the estimate"), false, colAccent))
	}
	iv := st.headline(e)
	if iv[0] != nil {
		marks = append(marks, markLineX("lower", f.v(*iv[0], "the lower bound"), true, colInk))
	}
	if iv[1] != nil {
		marks = append(marks, markLineX("upper", f.v(*iv[1], "the upper bound"), true, colInk))
	}
	bar := charts.NewBar()
	bar.SetGlobalOptions(append(baseOpts(id, 260, "axis", false),
		charts.WithXAxisOpts(opts.XAxis{Type: "value", Name: label + " in each bootstrap replicate", NameLocation: "middle", NameGap: 28, Scale: opts.Bool(true),
			SplitLine: &opts.SplitLine{Show: opts.Bool(false)}}),
		charts.WithYAxisOpts(yAxis("value", "Replicates")))...)
	bar.AddSeries("Replicates", data, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.BarWidth = "90%"
		s.ItemStyle = &opts.ItemStyle{Color: colBand50}
		if len(marks) > 0 {
			s.MarkLines = &opts.MarkLines{Data: marks, MarkLineStyle: opts.MarkLineStyle{Symbol: []string{"none", "none"}}}
		}
	}))
	obj, err := finish(name, f, bar, nil)
	caption := fmt.Sprintf("How %s varied across the bootstrap replicates. Solid line: the estimate; dashed lines: the %s %s interval.",
		label, st.levelText(), st.intervalName()) + undrawnReplicates(label, b)
	return one(chartSpec{ID: id, Title: "Bootstrap distribution of " + label, Caption: caption, Height: 260, Option: obj}, err)
}

// undrawnReplicates says which replicates a bootstrap histogram leaves out: those beyond its
// last edge (the 99th percentile) and those at +∞ (k in the Poisson limit). The interval
// lines still count them.
func undrawnReplicates(label string, b *analysis.Bins) string {
	count := func(n int) string {
		if n == 1 {
			return "1 replicate"
		}
		return formatNumber(float64(n), 0) + " replicates"
	}
	var parts []string
	if b.Overflow > 0 {
		parts = append(parts, fmt.Sprintf("%s above %s (beyond the 99th percentile)", count(b.Overflow), formatNumber(b.Edges[len(b.Edges)-1], 2)))
	}
	if b.Infinite > 0 {
		parts = append(parts, fmt.Sprintf("%s in the Poisson limit (%s = ∞)", count(b.Infinite), label))
	}
	if len(parts) == 0 {
		return ""
	}
	return " Not drawn, but counted in the interval: " + strings.Join(parts, " and ") + "."
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

func (st *renderState) chartTrees(c *analysis.Clusters) ([]chartSpec, string, error) {
	var specs []chartSpec
	for ti, tv := range c.Largest {
		if ti == maxTrees {
			break
		}
		if len(tv.Nodes) == 0 {
			continue
		}
		name := fmt.Sprintf("tree %d", ti+1)
		nodes := make([]*opts.TreeData, len(tv.Nodes))
		for i, n := range tv.Nodes {
			size := 6 + 2.5*math.Sqrt(float64(max(n.Offspring, 0)))
			val := "onset " + n.Onset.String() + ", generation " + strconv.Itoa(n.Generation) + ", infected " + strconv.Itoa(n.Offspring)
			if n.Setting != "" {
				val += ", " + n.Setting
			}
			nodes[i] = &opts.TreeData{Name: st.pseudonym(n.ID), Value: val, SymbolSize: round(size, 1)}
			if i == 0 {
				nodes[i].ItemStyle = &opts.ItemStyle{Color: colAccent, BorderColor: colAccent}
			}
		}
		for i, n := range tv.Nodes {
			switch {
			case i == 0 && n.Parent != -1:
				return nil, "", fmt.Errorf("chart %q: %s: the first node must be the root (parent −1)", "trees", name)
			case i == 0:
			case n.Parent < 0 || n.Parent >= i:
				return nil, "", fmt.Errorf("chart %q: %s: node %d names parent %d; parents must come before their infectees", "trees", name, i, n.Parent)
			default:
				p := nodes[n.Parent]
				p.Children = append(p.Children, nodes[i])
			}
		}
		id := st.newChartID("tree")
		height := 220 + 30*min(tv.Depth, 8)
		tree := charts.NewTree()
		tree.SetGlobalOptions(baseOpts(id, height, "item", false)...)
		tree.AddSeries(name, []opts.TreeData{*nodes[0]}, charts.WithTreeOpts(opts.TreeChart{
			Layout: "orthogonal", Orient: "TB", InitialTreeDepth: -1, Roam: opts.Bool(false),
			Label:  &opts.Label{Show: opts.Bool(false)},
			Leaves: &opts.TreeLeaves{Label: &opts.Label{Show: opts.Bool(false)}},
		}), charts.WithSeriesOpts(func(s *charts.SingleSeries) {
			s.Top, s.Bottom, s.Left, s.Right = "24", "24", "24", "24"
			s.ItemStyle = &opts.ItemStyle{Color: "#1f5c6e", BorderColor: "#1f5c6e"}
			s.LineStyle = &opts.LineStyle{Color: "#9fb3ba", Width: 1}
		}))
		obj, err := finish("trees", &finite{}, tree, nil)
		if err != nil {
			return nil, "", err
		}
		caption := fmt.Sprintf("%d cases over %d generations, first onset %s. Each dot is a case, each line an infection; larger dots infected more people; the red dot is the first case.",
			tv.Size, tv.Depth, dayText(tv.Start))
		if tv.Hidden > 0 {
			caption += fmt.Sprintf(" %d cases are not drawn, to keep the chart readable.", tv.Hidden)
		}
		specs = append(specs, chartSpec{ID: id, Title: fmt.Sprintf("Chain %d, starting with %s", ti+1, st.pseudonym(tv.Root)), Caption: caption, Height: height, Option: obj})
	}
	if len(specs) == 0 {
		return nil, "No linked transmission chains to draw.", nil
	}
	return specs, "", nil
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

// bandSeries draws prediction bands without stacking: each upper bound is an area filled in
// its band's colour from the axis up, and each lower bound is painted over in the colour of
// the band below it (the page background for the outermost), so tooltips show true values.
func bandSeries(line *charts.Line, name string, vals []opts.LineData, fill string) {
	line.AddSeries(name, vals, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.ShowSymbol = opts.Bool(false)
		s.Symbol = "none"
		s.LineStyle = &opts.LineStyle{Width: 0.5, Color: fill}
		s.ItemStyle = &opts.ItemStyle{Color: fill}
		s.AreaStyle = &opts.AreaStyle{Color: fill, Opacity: opts.Float(1)}
	}))
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
	bandSeries(line, "90% range, upper end", u90, colBand90)
	bandSeries(line, "50% range, upper end", u50, colBand50)
	bandSeries(line, "50% range, lower end", l50, colBand90)
	bandSeries(line, "90% range, lower end", l90, "#ffffff")
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

func (st *renderState) chartAgeMixing(a *analysis.AgeMixing) ([]chartSpec, string, error) {
	id := st.newChartID("age_mixing")
	g := len(a.Groups)
	if len(a.Counts) != g {
		return nil, "", fmt.Errorf("chart %q: %d groups but %d rows of counts", "age_mixing", g, len(a.Counts))
	}
	var cells, hidden []opts.HeatMapData
	top := 1
	for i, row := range a.Counts {
		if len(row) != g {
			return nil, "", fmt.Errorf("chart %q: row %d has %d cells for %d groups", "age_mixing", i, len(row), g)
		}
		for j, c := range row {
			if c == nil {
				hidden = append(hidden, opts.HeatMapData{Value: []any{j, i, 0}})
				continue
			}
			cells = append(cells, opts.HeatMapData{Value: []any{j, i, *c}})
			top = max(top, *c)
		}
	}
	height := 140 + 34*g
	hm := charts.NewHeatMap()
	ya := yAxis("category", "Infector's age group")
	ya.Data = a.Groups
	ya.NameGap = 64
	ya.Inverse = opts.Bool(true)
	ya.SplitLine = nil
	hm.SetGlobalOptions(append(baseOpts(id, height, "item", false),
		charts.WithXAxisOpts(xAxis("category", "Infectee's age group")),
		charts.WithYAxisOpts(ya),
		charts.WithGridOpts(opts.Grid{Left: "40", Right: "28", Top: "40", Bottom: "36", ContainLabel: opts.Bool(true)}))...)
	hm.SetXAxis(a.Groups)
	supp := "fewer than " + strconv.Itoa(st.cfg.suppress())
	hm.AddSeries("Links", cells, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.Label = &opts.Label{Show: opts.Bool(true)}
		s.ItemStyle = &opts.ItemStyle{BorderColor: "#ffffff", BorderWidth: 1}
	}))
	if len(hidden) > 0 {
		hm.AddSeries("Suppressed", hidden, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
			s.Label = &opts.Label{Show: opts.Bool(true), Formatter: "<" + strconv.Itoa(st.cfg.suppress()), Color: colMuted}
			s.ItemStyle = &opts.ItemStyle{Color: "#eef0f2", BorderColor: "#ffffff", BorderWidth: 1}
			s.SeriesTooltip = &opts.SeriesTooltip{Formatter: types.FuncStr("Suppressed: " + supp + " links")}
		}))
	}
	obj, err := finish("age_mixing", &finite{}, hm, func(obj map[string]any) {
		obj["visualMap"] = []any{map[string]any{
			"type": "continuous", "min": 0, "max": top, "seriesIndex": 0, "calculable": false,
			"orient": "horizontal", "right": 28, "top": 0, "itemHeight": 140, "itemWidth": 12,
			"text": []string{"more links", "fewer"}, "inRange": map[string]any{"color": []string{"#eaf1f3", "#1f5c6e"}},
		}}
		// The heat map's Validate does not place the category data on the axes; do it here.
		if xs, ok := obj["xAxis"].([]opts.XAxis); ok && len(xs) > 0 {
			xs[0].Data = a.Groups
		}
		if ys, ok := obj["yAxis"].([]opts.YAxis); ok && len(ys) > 0 {
			ys[0].Data = a.Groups
		}
	})
	caption := fmt.Sprintf("Each cell counts infections from an infector in the row's age group to an infectee in the column's (%d links). Grey cells hold %s links and are not shown.", a.Links, supp)
	return one(chartSpec{ID: id, Title: "Infections by age group of infector and infectee", Caption: caption, Height: height, Option: obj}, err)
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

func (st *renderState) chartWeeklyR(ws []analysis.WeekR) ([]chartSpec, string, error) {
	id := st.newChartID("weekly_r")
	f := &finite{}
	n := len(ws)
	labels := make([]string, n)
	up, lo := make([]opts.LineData, n), make([]opts.LineData, n)
	done, recent := make([]opts.LineData, n), make([]opts.LineData, n)
	firstCensored := -1
	thr := st.cfg.suppress()
	for i, w := range ws {
		labels[i] = weekText(w.WeekStart)
		up[i] = opts.LineData{Value: f.p(w.Upper, "an upper bound")}
		lo[i] = opts.LineData{Value: f.p(w.Lower, "a lower bound")}
		r := any(round(f.v(w.R, "a weekly R"), 3))
		if w.Cases > 0 && w.Cases < thr {
			r, up[i].Value, lo[i].Value = "-", "-", "-" // withheld with the small count
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

func (st *renderState) chartEndOfOutbreak(e *analysis.EndOfOutbreak) ([]chartSpec, string, error) {
	id := st.newChartID("end_of_outbreak")
	f := &finite{}
	labels := make([]string, len(e.Curve))
	data := make([]opts.LineData, len(e.Curve))
	for i, p := range e.Curve {
		labels[i] = p.Date.String()
		data[i] = opts.LineData{Value: round(100*f.v(p.Probability, "a probability"), 2)}
	}
	marks := []any{markLineYAt("95%", 95, colMuted, "insideStartBottom"), markLineYAt("99%", 99, colMuted, "insideStartTop")}
	inRange := func(s string) bool { return slices.Contains(labels, s) }
	if rt := st.ruleOfThumb(); rt != nil && inRange(rt.Date.String()) {
		marks = append(marks, map[string]any{"name": "rule of thumb", "xAxis": rt.Date.String(),
			"lineStyle": map[string]any{"color": colAccent, "type": "dashed"}, "label": map[string]any{"formatter": "2 × incubation", "color": colAccent}})
	}
	line := charts.NewLine()
	ya := yAxis("value", "Chance of no further cases (%)")
	ya.Min, ya.Max = 0, 100
	line.SetGlobalOptions(append(baseOpts(id, chartHeight, "axis", false),
		charts.WithXAxisOpts(xAxis("category", "Date")),
		charts.WithYAxisOpts(ya))...)
	line.SetXAxis(labels)
	line.AddSeries("Chance of no further cases (%)", data, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.ShowSymbol = opts.Bool(false)
		s.LineStyle = &opts.LineStyle{Width: 2.5, Color: "#1f5c6e"}
		s.ItemStyle = &opts.ItemStyle{Color: "#1f5c6e"}
		s.MarkLines = &opts.MarkLines{Data: marks, MarkLineStyle: opts.MarkLineStyle{Symbol: []string{"none", "none"}}}
	}))
	obj, err := finish("end_of_outbreak", f, line, nil)
	caption := "The chance that no further case follows, given the cases so far, the fitted offspring distribution and the serial interval, if no new case is reported by that date."
	return one(chartSpec{ID: id, Title: "Chance the outbreak is over", Caption: caption, Height: chartHeight, Option: obj}, err)
}
