//go:build !(goexperiment.simd && amd64)

package fv2d

// Without GOEXPERIMENT=simd on amd64 there is no SIMD face pass: the
// portable one does every face.

const simdHLLC = false

func hllcFaces4(gamma, g float64, r0, r1, r2, r3, l0, l1, l2, l3, f0, f1, f2, f3 []float64) int {
	return 0
}

func vanLeerSlopes4(w, d []float64) int { return 0 }

func evolvePrim4(g, h float64, w, d, r *[4][]float64, m int) int { return 0 }
