//go:build goexperiment.simd && amd64

package fv2d

import "testing"

// BenchmarkEulerPassesSIMD times each SIMD pass of a MUSCL-Hancock HLLC
// sweep on 512x512 vortex data: over four columns of 516 cells (the y
// sweep's layout; HLLC four faces at a time and, with AVX-512, eight) and,
// for the first two, over four rows (the x sweep's).
func BenchmarkEulerPassesSIMD(b *testing.B) {
	if !simdHLLC {
		b.Skip("no AVX2")
	}
	s := newSolver(b, "vortex", map[string]string{"nx": "512", "ny": "512"})
	sp := s.base
	sp.dtdx, sp.scr = 0.5*s.MaxDt()/s.st.DY, s.workers[0].scr
	u, st, m, g := s.st.U, s.stride, s.ny+2*s.g, sp.gamma
	c := s.g + 200 // the first of the four columns
	scr := sp.scr
	b.Run("cols/prim", func(b *testing.B) {
		for range b.N {
			primCols4(g-1, u[0][c:], u[2][c:], u[1][c:], u[3][c:], st, m, &scr.w, scr.ir)
		}
	})
	b.Run("cols/slopes+halfstep", func(b *testing.B) {
		for range b.N {
			vanLeerEvolve4(g, 0.5*sp.dtdx, &scr.w, scr.ir, &scr.d, &scr.r, 4, 4, 4*(m-1))
		}
	})
	defer func(wide bool) { hllcWide = wide }(hllcWide)
	for _, wide := range simdWidths() {
		name := "cols/hllc4"
		if wide {
			name = "cols/hllc8"
		}
		b.Run(name, func(b *testing.B) {
			hllcWide = wide
			for range b.N {
				sp.eulerFaces(&scr.r, &scr.d, &scr.f, 4, 4, 4*(m-2))
			}
		})
	}
	for _, speed := range []bool{false, true} {
		name := "cols/update"
		if speed {
			name += "+speeds"
		}
		b.Run(name, func(b *testing.B) {
			sp := sp
			sp.dtdx, sp.speed = 0, speed // leave the state as it is
			o := c + 2*st
			for range b.N {
				updateCols4(&sp, u[0][o:], u[2][o:], u[1][o:], u[3][o:], st, m-4, &scr.f)
			}
		})
	}
	n := s.nx + 2*s.g
	b.Run("rows/prim", func(b *testing.B) {
		for range b.N {
			for j := range 4 {
				o := (200 + j) * st
				primLine4(g-1, u[0][o:o+n], u[1][o:o+n], u[2][o:o+n], u[3][o:o+n], &scr.w, scr.ir)
			}
		}
	})
	b.Run("rows/slopes+halfstep", func(b *testing.B) {
		for range b.N {
			for range 4 {
				vanLeerEvolve4(g, 0.5*sp.dtdx, &scr.w, scr.ir, &scr.d, &scr.r, 1, 1, 1+(n-2)&^3)
			}
		}
	})
}

// BenchmarkEulerStepAVX2 is BenchmarkEulerMUSCLHLLCStep/n=512/threads=1 with
// HLLC at four lanes only, as on a processor with AVX2 but no AVX-512.
func BenchmarkEulerStepAVX2(b *testing.B) {
	if !simdHLLC {
		b.Skip("no AVX2")
	}
	defer func(wide bool) { hllcWide = wide }(hllcWide)
	hllcWide = false
	benchSteps(b, "vortex", map[string]string{"nx": "512", "ny": "512", "threads": "1"})
}
