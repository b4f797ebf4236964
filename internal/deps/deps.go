// Package deps pins modules until the code that uses them lands.
package deps

import (
	_ "github.com/chromedp/chromedp"
	_ "github.com/go-echarts/go-echarts/v2/charts"
	_ "github.com/gocarina/gocsv"
	_ "github.com/schollz/progressbar/v3"
	_ "github.com/spf13/cobra"
	_ "github.com/yuin/goldmark"
	_ "golang.org/x/term"
	_ "golang.org/x/text/encoding/charmap"
	_ "gonum.org/v1/gonum/dsp/fourier"
	_ "gonum.org/v1/gonum/mathext"
	_ "gopkg.in/yaml.v3"
)
