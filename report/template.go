package report

import (
	_ "embed"
	"html/template"

	"gridstage/internal/plural"
)

//go:embed page.html.tmpl
var pageSource string

var pageTemplate = template.Must(template.New("page").Funcs(template.FuncMap{
	"short": short,
	// count writes a number with its noun: {{count 1 "chain" "chains"}}.
	"count": plural.Count,
	"sum3":  func(v [3]int) int { return v[0] + v[1] + v[2] },
}).Parse(pageSource))
