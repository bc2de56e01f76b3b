package server

import (
	"gyrebench/sim/display"
	"gyrebench/web"
)

// fieldOptions is the menu of fields (display.Fields).
func fieldOptions(selected string) []web.Option {
	var opts []web.Option
	for _, f := range display.Fields() {
		opts = append(opts, web.Option{Value: f.Name, Label: f.Label + " (" + f.Units + ")", Title: f.Name, Selected: f.Name == selected})
	}
	return opts
}
