// Package templates holds caseweave's report templates, compiled into the binary: the
// default template (Default) that `caseweave report` uses when no --template folder is given,
// and the starter folder (WriteStarter) that `caseweave template init DIR` writes for a
// jurisdiction to adapt. A template folder is report.md plus partials/*.md (Markdown with Go
// template actions over analysis.Summary), style.css and config.yaml; package render reads it.
package templates
