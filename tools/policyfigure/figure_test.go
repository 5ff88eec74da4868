package main

import (
	"flag"
	"testing"

	"gridstage/internal/docblock"
)

var update = flag.Bool("update", false, "rewrite docs/img/matching-rho.png and the numbers beside it")

// TestPolicyFigure draws the matching-policy figure of docs/ACCURACY.md
// and checks it, and the numbers it draws, against the committed files, so
// a change of either policy's numbers fails here.
func TestPolicyFigure(t *testing.T) {
	png, data, err := draw(2000)
	if err != nil {
		t.Fatal(err)
	}
	docblock.CheckFigure(t, *update, "docs/img/matching-rho.png", png, data)
}
