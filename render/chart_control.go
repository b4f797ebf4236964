package render

import (
	"math"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
)

func init() {
	registerChart(chartDef{
		name: "control", order: 72,
		available: func(s *analysis.Summary) (bool, string) {
			return s.Control != nil && len(s.Control.Strategies) > 0 && len(s.Control.Efforts) > 1,
				"No offspring model was fitted, so no control scenario was worked out."
		},
		build: func(st *renderState) ([]chartSpec, string, error) { return st.chartControl(st.s.Control) },
	})
}

// controlLabels names the control strategies of analysis.Control in the report's words.
var controlLabels = map[string]string{
	"population": "Everyone's transmission cut",
	"individual": "Cases stopped at random",
	"targeted":   "Most infectious cases stopped",
}

// controlLabel is the report's name for a strategy, the name itself when it has none.
func controlLabel(name string) string {
	if l, ok := controlLabels[name]; ok {
		return l
	}
	return name
}

func (st *renderState) chartControl(c *analysis.Control) ([]chartSpec, string, error) {
	id := st.newChartID("control")
	f := &finite{}
	line := charts.NewLine()
	xa := opts.XAxis{Type: "value", Name: "Control effort (% of transmission or of cases)", NameLocation: "middle", NameGap: 28,
		Min: 0, Max: 100, SplitLine: &opts.SplitLine{Show: opts.Bool(false)}}
	// The axes close in on where the curves change: efforts up to half again the largest
	// threshold (at least 20%), chances from the lowest one's tens.
	top, low := 0.2, 1.0
	for _, s := range c.Strategies {
		if t := s.Threshold.Estimate; t != nil {
			top = math.Max(top, 1.5**t)
		}
		for _, e := range s.Extinction {
			if e.Estimate != nil {
				low = math.Min(low, *e.Estimate)
			}
		}
	}
	xa.Max = math.Min(100, 10*math.Ceil(10*top))
	ya := yAxis("value", "% chance a new case's chain dies out")
	ya.Min, ya.Max = math.Max(0, 10*math.Floor(10*low)), 100
	line.SetGlobalOptions(append(baseOpts(id, 340, "axis", true),
		charts.WithXAxisOpts(xa), charts.WithYAxisOpts(ya))...)
	for k, s := range c.Strategies {
		data := make([]opts.LineData, 0, len(c.Efforts)+1)
		// The threshold is a point of the curve too: at R = 1 every chain dies out.
		th := s.Threshold.Estimate
		for i, e := range c.Efforts {
			if i >= len(s.Extinction) {
				break
			}
			if th != nil && *th > 0 && (i == 0 || c.Efforts[i-1] < *th) && e > *th {
				data = append(data, opts.LineData{Value: []any{round(100*f.v(*th, "a threshold"), 2), 100}})
			}
			y := any("-")
			if p := s.Extinction[i].Estimate; p != nil {
				y = round(100*f.v(*p, "an extinction probability"), 2)
			}
			data = append(data, opts.LineData{Value: []any{round(100*f.v(e, "a control effort"), 2), y}})
		}
		color := palette()[k%len(palette())]
		var marks []any
		// The population-wide threshold is the individual one (both 1 − 1/R): marked once.
		if t := s.Threshold.Estimate; t != nil && s.Name != "population" {
			marks = append(marks, markLineX("R < 1 from "+formatNumber(100*f.v(*t, "a threshold"), 0)+"%", round(100**t, 2), true, color))
		}
		line.AddSeries(controlLabel(s.Name), data, charts.WithSeriesOpts(func(ss *charts.SingleSeries) {
			ss.ShowSymbol = opts.Bool(false)
			ss.LineStyle = &opts.LineStyle{Width: 2.5, Color: color}
			ss.ItemStyle = &opts.ItemStyle{Color: color}
			if len(marks) > 0 {
				ss.MarkLines = &opts.MarkLines{Data: marks, MarkLineStyle: opts.MarkLineStyle{Symbol: []string{"none", "none"}}}
			}
		}))
	}
	obj, err := finish("control", f, line, nil)
	caption := "Each line is one way of spending the same effort. A dashed line marks the effort from which the reproduction number falls below 1, so that every new chain dies out (for cases stopped at random and for everyone's transmission cut alike it is the same effort)."
	return one(chartSpec{ID: id, Title: "What control would do to a new introduction", Caption: caption, Height: 340, Option: obj}, err)
}
