package circuit

import "math"

// LoadedNodeMag2 returns, for each of the stage's nodes, |V(node)/V(In)|²
// at each freqHz[i] with the stage's output port loaded by the admittance
// yl[i] in S (per side for a differential stage; see [Loading.Sweep]), and
// the nodes' unloaded transfers (as [Stage.NodeTransferFunctions]), from
// one interpolation ([Stage.NodePorts]). port[i] is the port's voltage P
// per unit V(In) as loaded: V(Out) of a single-ended stage, (V(Out) −
// V(OutN))/2 of a differential one, that is the stage's transfer times
// its loading factor ([Loading.Sweep]), halved for a differential stage.
// With vin and z each node's transfer and transimpedance from the port
// over their shared determinant D, the stage draws YL·P from the port and
//
//	V(node) = (Nvin − Nz·YL·P)/D
//
// per unit V(In): exact for the stage as loaded. dst, when it has room,
// is reused.
func (st Stage) LoadedNodeMag2(m Model, nodes []string, freqHz []float64, yl, port []complex128, dst [][]float64) ([][]float64, []Rational, error) {
	vin, z, err := st.NodePorts(m, nodes)
	if err != nil {
		return nil, nil, err
	}
	n := len(nodes)
	if cap(dst) < n {
		dst = make([][]float64, n)
	}
	dst = dst[:n]
	for j := range dst {
		if cap(dst[j]) < len(freqHz) {
			dst[j] = make([]float64, len(freqHz))
		}
		dst[j] = dst[j][:len(freqHz)]
	}
	if n == 0 {
		return dst, vin, nil
	}
	den := newEvenOddPoly(vin[0].Den)
	nv := make([]evenOddPoly, n)
	nz := make([]evenOddPoly, n)
	for i := range nodes {
		nv[i], nz[i] = newEvenOddPoly(vin[i].Num), newEvenOddPoly(z[i].Num)
	}
	k := 2 * math.Pi / vin[0].ScaleRadPerSec
	for i, f := range freqHz {
		x := k * f
		u := -x * x
		d := den.at(x, u)
		drawn := yl[i] * port[i]
		for j := range n {
			v := div(nv[j].at(x, u)-nz[j].at(x, u)*drawn, d)
			dst[j][i] = real(v)*real(v) + imag(v)*imag(v)
		}
	}
	return dst, vin, nil
}
