//go:build !(goexperiment.simd && amd64)

package fv2d

// Without GOEXPERIMENT=simd on amd64 there are no SIMD passes: the
// portable ones do every cell and face.

const simdHLLC = false

var hllcWide = false

func hllcFaces4(gamma, g float64, r0, r1, r2, r3, l0, l1, l2, l3, f0, f1, f2, f3 []float64) int {
	return 0
}

func vanLeerSlopes4(w, d []float64) int { return 0 }

func vanLeerEvolve4(g, h float64, w *[4][]float64, ir []float64, d, r *[4][]float64, o, lo, hi int) {}

func primCols4(gm1 float64, rho, mn, mt, en []float64, stride, m int, w *[4][]float64, ir []float64) {
}

func updateCols4(sp *sweepParams, rho, mn, mt, en []float64, stride, rows int, f *[4][]float64) (res lineResult) {
	return res
}

func primLine4(gm1 float64, rho, mn, mt, en []float64, w *[4][]float64, ir []float64) int {
	return 0
}

func updateEulerLine4(c float64, rho, mn, mt, en []float64, f0, f1, f2, f3 []float64) (bad bool, n int) {
	return false, 0
}

func speedsEuler4(gamma float64, rho, mn, mt, en []float64) (sn, st float64, n int) {
	return 0, 0, 0
}
