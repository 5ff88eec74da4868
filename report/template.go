package report

import (
	_ "embed"
	"html/template"
)

//go:embed page.html.tmpl
var pageSource string

var pageTemplate = template.Must(template.New("page").Funcs(template.FuncMap{
	"short": short,
}).Parse(pageSource))
