package web_test

import (
	"github.com/polewright/polewright/web"
	"github.com/polewright/polewright/web/draw"
)

// realDeps are the drawing implementations the workbench serves with.
func realDeps() web.Deps { return draw.Deps() }
