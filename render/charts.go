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

// chartDef is one chart a template can draw with chart "name": each is defined, and
// registered by an init function, in its own chart_<name>.go file.
type chartDef struct {
	name string
	// order places the chart in ChartNames, which lists them in report order.
	order int
	// available says, from the Summary alone and cheaply, whether there is anything to
	// draw; when not, note says why in a sentence the report prints instead.
	available func(s *analysis.Summary) (ok bool, note string)
	// build draws the chart from Summary fields only (one or more specs, or none and a note).
	build func(st *renderState) ([]chartSpec, string, error)
}

// chartDefs holds every chart by name. It is filled by the init functions of the chart
// files and only read afterwards.
var chartDefs = map[string]chartDef{}

func registerChart(d chartDef) {
	if _, dup := chartDefs[d.name]; dup {
		panic("render: chart " + d.name + " registered twice")
	}
	chartDefs[d.name] = d
}

// ChartNames lists the charts a template can ask for with chart "name", in report order.
func ChartNames() []string {
	names := make([]string, 0, len(chartDefs))
	for n := range chartDefs {
		names = append(names, n)
	}
	slices.SortFunc(names, func(a, b string) int { return chartDefs[a].order - chartDefs[b].order })
	return names
}

func isChartName(n string) bool { _, ok := chartDefs[n]; return ok }

// fnHas reports whether the named chart or table has data in this run, without drawing it.
func (st *renderState) fnHas(name string) (bool, error) {
	if d, ok := chartDefs[name]; ok {
		ok, _ := d.available(st.s)
		return ok, nil
	}
	_, ok, err := st.buildTable(name, cellFmt{})
	return ok, err
}

// buildChart builds the named chart, or returns the note that stands in for it.
func (st *renderState) buildChart(name string) ([]chartSpec, string, error) {
	d, ok := chartDefs[name]
	if !ok {
		return nil, "", errorf("chart: unknown chart %q", name)
	}
	if ok, note := d.available(st.s); !ok {
		return nil, note, nil
	}
	return d.build(st)
}

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

// gridRight is a finish patch that widens the right margin of a chart's one grid to px
// pixels (go-echarts adds a second grid rather than replace the first).
func gridRight(px int) func(map[string]any) {
	return func(obj map[string]any) {
		if gs, ok := obj["grid"].([]opts.Grid); ok && len(gs) > 0 {
			gs[0].Right = strconv.Itoa(px)
		}
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

// fanBands draws the 50% and 90% prediction bands of a fan chart from their upper and
// lower ends, outermost first, as bandSeries explains.
func fanBands(line *charts.Line, u90, u50, l50, l90 []opts.LineData) {
	bandSeries(line, "90% range, upper end", u90, colBand90)
	bandSeries(line, "50% range, upper end", u50, colBand50)
	bandSeries(line, "50% range, lower end", l50, colBand90)
	bandSeries(line, "90% range, lower end", l90, "#ffffff")
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
