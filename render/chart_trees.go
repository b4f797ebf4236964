package render

import (
	"fmt"
	"math"
	"strconv"

	"github.com/caseweave/caseweave/pipeline/analysis"
	"github.com/go-echarts/go-echarts/v2/charts"
	"github.com/go-echarts/go-echarts/v2/opts"
)

func init() {
	registerChart(chartDef{
		name: "trees", order: 50,
		available: func(s *analysis.Summary) (bool, string) {
			return s.Clusters != nil && len(s.Clusters.Largest) > 0, "No linked transmission chains to draw."
		},
		build: func(st *renderState) ([]chartSpec, string, error) { return st.chartTrees(st.s.Clusters) },
	})
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
			// The released view carries a case's onset week, never its date.
			val := "onset in week " + weekText(n.Onset) + ", generation " + strconv.Itoa(n.Generation)
			if n.Setting != "" {
				val += ", " + n.Setting
			}
			if n.Elsewhere {
				val += ", lives elsewhere"
			}
			nodes[i] = &opts.TreeData{Name: n.ID, Value: val, SymbolSize: round(size, 1)}
			switch {
			case i == 0:
				nodes[i].ItemStyle = &opts.ItemStyle{Color: colAccent, BorderColor: colAccent}
			case n.Elsewhere:
				// A case of another jurisdiction is drawn hollow.
				nodes[i].ItemStyle = &opts.ItemStyle{Color: "#ffffff", BorderColor: colMuted, BorderWidth: 1.5}
			}
			if i == 0 && n.Elsewhere {
				nodes[i].ItemStyle = &opts.ItemStyle{Color: "#ffffff", BorderColor: colAccent, BorderWidth: 2}
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
		caption := fmt.Sprintf("%d cases over %d generations, first onset in week %s. Each dot is a case, each line an infection; larger dots infected more people; the red dot is the first case.",
			tv.Size, tv.Depth, weekText(tv.Start))
		if tv.Local < tv.Size {
			caption += fmt.Sprintf(" %d of its cases live here; hollow dots are the %d that live elsewhere.", tv.Local, tv.Size-tv.Local)
		}
		if tv.Hidden > 0 {
			caption += fmt.Sprintf(" %d cases are not drawn, to keep the chart readable.", tv.Hidden)
		}
		specs = append(specs, chartSpec{ID: id, Title: fmt.Sprintf("Chain %d, starting with %s", ti+1, tv.Root), Caption: caption, Height: height, Option: obj})
	}
	if len(specs) == 0 {
		return nil, "No linked transmission chains to draw.", nil
	}
	return specs, "", nil
}
