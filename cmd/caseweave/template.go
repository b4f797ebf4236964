package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"github.com/caseweave/caseweave/templates"
)

func newTemplateCmd(e env) *cobra.Command {
	c := &cobra.Command{
		Use:   "template",
		Short: "Work with report template folders",
		Args:  exactArgs(0, "a subcommand (init)"),
		RunE: func(c *cobra.Command, args []string) error {
			return usageErrorf("template needs a subcommand: caseweave template init DIR")
		},
	}
	c.AddCommand(&cobra.Command{
		Use:   "init DIR",
		Short: "Write a commented starting template folder into DIR",
		Long: `template init writes a template folder — report.md and its partials, style.css, and a
commented config.yaml — that renders the default report. Edit it for your jurisdiction and
pass it to report with --template DIR. Existing files are never overwritten.`,
		Args: exactArgs(1, "the folder to write"),
		RunE: func(c *cobra.Command, args []string) error {
			if err := templates.WriteStarter(args[0]); err != nil {
				return withCode(exitOutput, err)
			}
			fmt.Fprintf(e.stderr, "wrote a starting template to %s; try: caseweave report --template %s LINELIST.csv\n", args[0], args[0])
			return nil
		},
	})
	return c
}
