package plots

import (
	"image/color"
	"math"
	"sort"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// CIE L* of reference colours. White and black are the ends of the scale by
// definition (CIE 15:2004); sRGB grey 119/255 has L* = 50.0 (a value of the
// trade recalled from memory, and it follows from the two formulas:
// ((119/255+0.055)/1.055)^2.4 = 0.1845 = Y, 116 Y^(1/3) - 16 = 50.0).
func TestLightnessReference(t *testing.T) {
	for _, tc := range []struct {
		c    string
		want float64
		tol  float64
	}{
		{"#ffffff", 100, 1e-3}, // the tabulated matrix rows sum to the white point to 6 digits
		{"#000000", 0, 1e-9},
		{"#777777", 50.0, 0.05},
	} {
		if got := lightness(hex(tc.c)); math.Abs(got-tc.want) > tc.tol {
			t.Errorf("L*(%s) = %.4f, want %.4f", tc.c, got, tc.want)
		}
	}
}

// The forward and inverse matrices of sRGB <-> XYZ must be inverse to each
// other (law): the 8-bit round trip sRGB -> Lab -> sRGB is exact.
func TestLabRoundTrip(t *testing.T) {
	for r := 0; r < 256; r += 17 {
		for g := 0; g < 256; g += 17 {
			for b := 0; b < 256; b += 17 {
				c := color.NRGBA{uint8(r), uint8(g), uint8(b), 255}
				if back := labToSRGB(srgbToLab(c)); back != c {
					t.Fatalf("round trip %v -> %v", c, back)
				}
			}
		}
	}
}

// The heat-map colour map must be perceptually ordered. Two checks of CIE
// L*: (1) of the displayable colours (Lab -> clipped linear sRGB -> Lab, no
// rounding) at 4096 parameters: strictly increasing, so gamut clipping
// never bends lightness back, and within 1 of the linear ramp the
// lightness-placed control points aim at; (2) of the 8-bit colours the
// palette hands out: strictly increasing over 128 samples, and over 4096
// samples (finer than 8 bits can follow) never falling by more than 0.5,
// half of a just-noticeable lightness difference (ΔL* about 1, common
// practice).
func TestSequentialLightnessMonotone(t *testing.T) {
	cm := NewSequential(0, 1)
	const n = 4096
	l0, l1 := cm.labAt(0).L, cm.labAt(1).L
	if l0 > 15 || l1 < 90 {
		t.Errorf("lightness range [%.1f, %.1f]; want to span at least [15, 90]", l0, l1)
	}
	prev := -1.0
	for i := range n {
		s := float64(i) / (n - 1)
		l := linearToLab(labToLinear(cm.labAt(s))).L
		if l <= prev {
			t.Fatalf("L* not increasing at t=%.5f: %.4f after %.4f", s, l, prev)
		}
		prev = l
		if lin := l0 + (l1-l0)*s; math.Abs(l-lin) > 1 {
			t.Errorf("t=%.4f: L* %.2f departs from the linear ramp %.2f by more than 1", s, l, lin)
		}
	}
	for _, m := range []int{128, 4096} {
		prev := -1.0
		for i, c := range cm.Palette(m).Colors() {
			l := lightness(c)
			if (m == 128 && l <= prev) || l < prev-0.5 {
				t.Fatalf("%d-colour palette: L* falls at colour %d: %.3f after %.3f", m, i, l, prev)
			}
			prev = math.Max(prev, l)
		}
	}
	// At() agrees with the palette and rejects values outside the range.
	c, err := cm.At(0.5)
	if err != nil || lightness(c) < 40 || lightness(c) > 60 {
		t.Errorf("At(0.5) = %v, %v; want mid lightness", c, err)
	}
	if _, err := cm.At(1.5); err == nil {
		t.Error("At(1.5) on [0,1]: no error")
	}
}

// vienot returns the colour a dichromat sees in place of c: protanope
// (kind 'p') or deuteranope (kind 'd'), after F. Viénot, H. Brettel,
// J. D. Mollon, "Digital video colourmaps for checking the legibility of
// displays by dichromats", Color Res. Appl. 24 (1999) 243-252. The
// linear-RGB to LMS matrix and the two reduction rows are recalled from
// memory from that paper; the inverse is computed with gonum/mat.
func vienot(t *testing.T, c color.NRGBA, kind byte) lab {
	toLMS := mat.NewDense(3, 3, []float64{
		17.8824, 43.5161, 4.11935,
		3.45565, 27.1554, 3.86714,
		0.0299566, 0.184309, 1.46709,
	})
	var fromLMS mat.Dense
	if err := fromLMS.Inverse(toLMS); err != nil {
		t.Fatal(err)
	}
	rgb := mat.NewVecDense(3, []float64{linearise(float64(c.R) / 255), linearise(float64(c.G) / 255), linearise(float64(c.B) / 255)})
	var lms mat.VecDense
	lms.MulVec(toLMS, rgb)
	L, M, S := lms.AtVec(0), lms.AtVec(1), lms.AtVec(2)
	switch kind {
	case 'p':
		L = 2.02344*M - 2.52581*S
	case 'd':
		M = 0.494207*L + 1.24827*S
	}
	var out mat.VecDense
	out.MulVec(&fromLMS, mat.NewVecDense(3, []float64{L, M, S}))
	cl := func(v float64) float64 { return math.Min(1, math.Max(0, v)) }
	return linearToLab(cl(out.AtVec(0)), cl(out.AtVec(1)), cl(out.AtVec(2)))
}

func deltaE(a, b lab) float64 { // CIE 1976 colour difference
	return math.Sqrt((a.L-b.L)*(a.L-b.L) + (a.A-b.A)*(a.A-b.A) + (a.B-b.B)*(a.B-b.B))
}

// The simulation leaves neutral greys grey (a property of the Viénot
// construction: the reduction planes contain the white point).
func TestVienotKeepsGrey(t *testing.T) {
	for _, k := range []byte{'p', 'd'} {
		g := vienot(t, hex("#808080"), k)
		if math.Abs(g.A) > 1 || math.Abs(g.B) > 1 {
			t.Errorf("%c: grey maps to a=%.2f b=%.2f", k, g.A, g.B)
		}
	}
}

// The line colours stay apart in grey scale (L* steps of at least 8) and
// for normal, protanope and deuteranope vision (CIE76 ΔE >= 20 between any
// two; ΔE of about 2.3 is a just-noticeable difference, common practice).
func TestLineColoursDistinct(t *testing.T) {
	ls := []float64{}
	for _, c := range lineColours {
		ls = append(ls, lightness(c))
	}
	sort.Float64s(ls)
	for i := 1; i < len(ls); i++ {
		if ls[i]-ls[i-1] < 8 {
			t.Errorf("L* ladder %v: step %.1f < 8 between %d and %d", ls, ls[i]-ls[i-1], i-1, i)
		}
	}
	if ls[len(ls)-1] > 78 {
		t.Errorf("lightest line colour L* %.1f: too pale on white", ls[len(ls)-1])
	}
	for _, kind := range []byte{0, 'p', 'd'} {
		for i := range lineColours {
			for j := i + 1; j < len(lineColours); j++ {
				a, b := srgbToLab(lineColours[i]), srgbToLab(lineColours[j])
				if kind != 0 {
					a, b = vienot(t, lineColours[i], kind), vienot(t, lineColours[j], kind)
				}
				if d := deltaE(a, b); d < 20 {
					t.Errorf("vision %q: colours %d and %d differ by ΔE %.1f < 20", kind, i, j, d)
				}
			}
		}
	}
}

// No two of the first 84 groups share colour, dash and marker all at once,
// and consecutive groups differ in all three.
func TestStylesUnique(t *testing.T) {
	seen := map[Style]int{}
	for i := range 84 {
		s := StyleOf(i)
		if j, dup := seen[s]; dup {
			t.Fatalf("groups %d and %d share style %v", j, i, s)
		}
		seen[s] = i
		if i > 0 {
			p := StyleOf(i - 1)
			if p.Colour == s.Colour || p.Dash == s.Dash || p.Marker == s.Marker {
				t.Errorf("groups %d and %d differ in fewer than three ways: %v / %v", i-1, i, p, s)
			}
		}
	}
}

// The diverging map reads the same distance from its centre the same on
// both sides: (1) L* of the displayable colours falls strictly from the
// centre towards each end and is equal (within 1) at equal distances, so
// grey scale keeps the distance; the centre is the lightest and neutral
// (chroma below 3); (2) the two sides stay apart in hue for normal,
// protanope and deuteranope vision (Viénot et al. 1999, as above): CIE76
// ΔE at least 40 between the ends and 15 between the quarter points.
func TestDivergingSymmetric(t *testing.T) {
	cm := NewDiverging(0, 4)
	const n = 2048
	disp := func(t float64) lab { return linearToLab(labToLinear(cm.labAt(t))) }
	mid := disp(0.5)
	if math.Hypot(mid.A, mid.B) > 3 || mid.L < 90 {
		t.Errorf("centre L*a*b* %+v: want light and neutral", mid)
	}
	prevLo, prevHi := mid.L, mid.L
	for i := 1; i <= n; i++ {
		d := 0.5 * float64(i) / n
		lo, hi := disp(0.5-d), disp(0.5+d)
		if lo.L >= prevLo || hi.L >= prevHi {
			t.Fatalf("distance %.4f: L* %.3f / %.3f does not fall from %.3f / %.3f", d, lo.L, hi.L, prevLo, prevHi)
		}
		if math.Abs(lo.L-hi.L) > 1 {
			t.Errorf("distance %.4f: L* %.2f below, %.2f above the centre", d, lo.L, hi.L)
		}
		prevLo, prevHi = lo.L, hi.L
	}
	if prevLo > 45 {
		t.Errorf("ends at L* %.1f: too light to stand out", prevLo)
	}
	for _, kind := range []byte{0, 'p', 'd'} {
		for _, tc := range []struct{ d, min float64 }{{0.5, 40}, {0.25, 15}} {
			a, b := cm.colourAt(0.5-tc.d), cm.colourAt(0.5+tc.d)
			la, lb := srgbToLab(a), srgbToLab(b)
			if kind != 0 {
				la, lb = vienot(t, a, kind), vienot(t, b, kind)
			}
			if got := deltaE(la, lb); got < tc.min {
				t.Errorf("vision %q, %.2f either side of the centre: ΔE %.1f < %g", kind, tc.d, got, tc.min)
			}
		}
	}
	// At() maps the range onto the parameter: the middle value is the centre.
	c, err := cm.At(2)
	if err != nil || c != cm.colourAt(0.5) {
		t.Errorf("At(2) = %v, %v", c, err)
	}
	if _, err := cm.At(-0.1); err == nil {
		t.Error("At(-0.1) on [0,4]: no error")
	}
}
