package circuit_test

import (
	"github.com/polewright/polewright/synth/circuit/circuittest"
)

// The textbook stages of package circuittest, under the short names the
// tests use.
var (
	res         = circuittest.Res
	capa        = circuittest.Cap
	rcBuffer    = circuittest.RCBuffer
	sallenKeyLP = circuittest.SallenKeyLP
	sallenKeyHP = circuittest.SallenKeyHP
	mfbLP       = circuittest.MFBLP
	inverting   = circuittest.Inverting
	ideal       = circuittest.Ideal
	singlePole  = circuittest.SinglePole
)
