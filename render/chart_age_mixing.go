package render

import (
	"fmt"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
	"github.com/go-echarts/go-echarts/v2/types"
)

func init() {
	registerChart(chartDef{
		name: "age_mixing", order: 80,
		available: func(s *analysis.Summary) (bool, string) {
			return s.AgeMixing != nil && len(s.AgeMixing.Groups) > 0, "No age groups were recorded for linked cases."
		},
		build: func(st *renderState) ([]chartSpec, string, error) { return st.chartAgeMixing(st.s.AgeMixing) },
	})
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
	hm.AddSeries("Links", cells, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
		s.Label = &opts.Label{Show: opts.Bool(true)}
		s.ItemStyle = &opts.ItemStyle{BorderColor: "#ffffff", BorderWidth: 1}
	}))
	if len(hidden) > 0 {
		hm.AddSeries("Withheld", hidden, charts.WithSeriesOpts(func(s *charts.SingleSeries) {
			s.Label = &opts.Label{Show: opts.Bool(true), Formatter: "·", Color: colMuted}
			s.ItemStyle = &opts.ItemStyle{Color: "#eef0f2", BorderColor: "#ffffff", BorderWidth: 1}
			s.SeriesTooltip = &opts.SeriesTooltip{Formatter: types.FuncStr("Withheld to protect privacy")}
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
	caption := fmt.Sprintf("Each cell counts infections from an infector in the row's age group to an infectee in the column's (%d links). Grey cells are withheld: they hold fewer than %d links, or would let such a cell be worked out.", a.Links, st.threshold())
	return one(chartSpec{ID: id, Title: "Infections by age group of infector and infectee", Caption: caption, Height: height, Option: obj}, err)
}
