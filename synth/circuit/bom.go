package circuit

import (
	"encoding/csv"
	"io"
	"strconv"
	"strings"

	"github.com/polewright/polewright/standards/si"
)

// BOMHeader is the header row of the bill of materials, as written: the
// seven columns of the outside contract, then display.
const BOMHeader = "ref,kind,value,unit,series,tolerance,stage,display"

var bomHeader = strings.Split(BOMHeader, ",")

// KindOpAmp is the kind column of an op-amp's row in the bill of materials.
const KindOpAmp = "opamp"

// KindFDA is the kind column of a fully differential op-amp's row.
const KindFDA = "fda"

// formatValue writes v exactly, in the shortest plain decimal that reads
// back as the same float64, never with an exponent ("10200",
// "0.00000001", "10000000").
func formatValue(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }

// DisplayDigits is the most significant digits of the display column.
const DisplayDigits = 6

// displayValue writes v in engineering notation for a person, with the
// unit symbol ("470 pF", "19.6 kΩ", "10 MHz"), to [DisplayDigits]
// significant digits, trailing zeros dropped.
func displayValue(v float64, unit string) string { return si.Format(v, unit, DisplayDigits) }

// WriteBOM writes the bill of materials as CSV: the header row [BOMHeader]
// (ref,kind,value,unit,series,tolerance,stage), then one row per part and
// per op-amp, stage by stage, each stage's parts in their order followed by
// its op-amps.
//
//   - ref is the chain-wide designator ([Chain.Ref]); in the SPICE deck the
//     same name is the element, with an X prefix for op-amps ([SpiceName]).
//   - kind is "resistor", "capacitor", "opamp" or "fda" (a fully
//     differential op-amp).
//   - value is the value as built (Part.Value), exactly, as the shortest
//     plain decimal that reads back as the same number, never with an
//     exponent (a capacitor of 470 pF is 0.00000000047); unit is "Ohm" or
//     "F".
//   - series is the part's E-series ("E96"), or "exact" for an unrounded
//     value; tolerance is the tolerance in percent with a % sign ("1%"),
//     or empty when it is 0 (unspecified).
//   - stage is the 1-based stage number.
//   - display is the value in engineering notation for a person
//     ("470 pF", "19.6 kΩ", "10 MHz"), at most [DisplayDigits]
//     significant digits.
//
// An op-amp's row has value = the model's gain-bandwidth product and unit
// "Hz" (display "10 MHz"), or value, unit and display empty for the
// ideal model; series and tolerance are empty. The chain is validated first; an invalid chain returns an
// error wrapping [ErrInvalid] and writes nothing.
func (c Chain) WriteBOM(w io.Writer) error {
	if err := c.Validate(); err != nil {
		return err
	}
	cw := csv.NewWriter(w)
	if err := cw.Write(bomHeader); err != nil {
		return err
	}
	for k, st := range c.Stages {
		stage := strconv.Itoa(k + 1)
		for _, p := range st.Parts {
			unit, symbol := "Ohm", "Ω"
			if p.Kind == Capacitor {
				unit, symbol = "F", "F"
			}
			series := p.Series
			if series == "" {
				series = "exact"
			}
			tol := ""
			if p.TolerancePct != 0 {
				tol = formatValue(p.TolerancePct) + "%"
			}
			row := []string{c.Ref(k+1, p.Ref), string(p.Kind), formatValue(p.Value), unit, series, tol, stage, displayValue(p.Value, symbol)}
			if err := cw.Write(row); err != nil {
				return err
			}
		}
		for _, u := range st.OpAmps {
			value, unit, display := "", "", ""
			if !c.Model.Ideal {
				value, unit, display = formatValue(c.Model.GBWHz), "Hz", displayValue(c.Model.GBWHz, "Hz")
			}
			kind := KindOpAmp
			if u.FullyDifferential() {
				kind = KindFDA
			}
			if err := cw.Write([]string{c.Ref(k+1, u.Ref), kind, value, unit, "", "", stage, display}); err != nil {
				return err
			}
		}
	}
	cw.Flush()
	return cw.Error()
}
