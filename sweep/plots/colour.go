package plots

import (
	"fmt"
	"image/color"
	"math"
)

// Colour science used to choose and check the palettes: sRGB (IEC
// 61966-2-1:1999) to CIE XYZ under the D65 white point and CIE 1976
// L*a*b* (CIE 15:2004). Matrices as tabulated by B. Lindbloom
// (brucelindbloom.com, recalled from memory; the round trip is tested).

// lab is a colour in CIE L*a*b* coordinates (D65 white).
type lab struct{ L, A, B float64 }

// D65 reference white in XYZ, Y normalised to 1.
const (
	whiteX = 0.95047
	whiteY = 1.0
	whiteZ = 1.08883
)

// linearise maps an sRGB channel in [0, 1] to linear light.
func linearise(c float64) float64 {
	if c <= 0.04045 {
		return c / 12.92
	}
	return math.Pow((c+0.055)/1.055, 2.4)
}

// delinearise is the inverse of linearise.
func delinearise(c float64) float64 {
	if c <= 0.0031308 {
		return 12.92 * c
	}
	return 1.055*math.Pow(c, 1/2.4) - 0.055
}

func labF(t float64) float64 {
	const d = 6.0 / 29
	if t > d*d*d {
		return math.Cbrt(t)
	}
	return t/(3*d*d) + 4.0/29
}

func labFInv(t float64) float64 {
	const d = 6.0 / 29
	if t > d {
		return t * t * t
	}
	return 3 * d * d * (t - 4.0/29)
}

// linearToLab converts linear-light sRGB to L*a*b*.
func linearToLab(r, g, b float64) lab {
	x := 0.4124564*r + 0.3575761*g + 0.1804375*b
	y := 0.2126729*r + 0.7151522*g + 0.0721750*b
	z := 0.0193339*r + 0.1191920*g + 0.9503041*b
	fx, fy, fz := labF(x/whiteX), labF(y/whiteY), labF(z/whiteZ)
	return lab{L: 116*fy - 16, A: 500 * (fx - fy), B: 200 * (fy - fz)}
}

// srgbToLab converts an 8-bit sRGB colour to L*a*b*.
func srgbToLab(c color.NRGBA) lab {
	return linearToLab(linearise(float64(c.R)/255), linearise(float64(c.G)/255), linearise(float64(c.B)/255))
}

// labToLinear converts L*a*b* to linear-light sRGB, each channel clipped
// to [0, 1] (the gamut).
func labToLinear(c lab) (r, g, b float64) {
	fy := (c.L + 16) / 116
	fx := fy + c.A/500
	fz := fy - c.B/200
	x, y, z := whiteX*labFInv(fx), whiteY*labFInv(fy), whiteZ*labFInv(fz)
	cl := func(v float64) float64 { return math.Min(1, math.Max(0, v)) }
	r = cl(3.2404542*x - 1.5371385*y - 0.4985314*z)
	g = cl(-0.9692660*x + 1.8760108*y + 0.0415560*z)
	b = cl(0.0556434*x - 0.2040259*y + 1.0572252*z)
	return r, g, b
}

// labToSRGB converts L*a*b* to 8-bit sRGB, clipped to the gamut. Of the
// eight colours that round each channel down or up it returns the one
// nearest to c, with lightness errors weighted four times: plain rounding
// can lower L* where the hue turns fast, which would put dips into a ramp
// that is monotone before rounding.
func labToSRGB(c lab) color.NRGBA {
	r, g, b := labToLinear(c)
	want := linearToLab(r, g, b)
	ch := [3]float64{255 * delinearise(r), 255 * delinearise(g), 255 * delinearise(b)}
	var best color.NRGBA
	bestCost := math.Inf(1)
	for m := range 8 {
		var q [3]uint8
		for k := range 3 {
			v := math.Floor(ch[k])
			if m&(1<<k) != 0 {
				v = math.Ceil(ch[k])
			}
			q[k] = uint8(v)
		}
		cand := color.NRGBA{R: q[0], G: q[1], B: q[2], A: 255}
		got := srgbToLab(cand)
		dl, da, db := got.L-want.L, got.A-want.A, got.B-want.B
		if cost := 5*dl*dl + da*da + db*db; cost < bestCost {
			best, bestCost = cand, cost
		}
	}
	return best
}

// lightness returns the CIE L* of any colour (alpha ignored).
func lightness(c color.Color) float64 {
	n := color.NRGBAModel.Convert(c).(color.NRGBA)
	n.A = 255
	return srgbToLab(n).L
}

// hex parses "#rrggbb"; it panics on a malformed literal (used only for the
// package's own constant palettes).
func hex(s string) color.NRGBA {
	var r, g, b uint8
	if _, err := fmt.Sscanf(s, "#%02x%02x%02x", &r, &g, &b); err != nil {
		panic("plots: bad colour literal " + s)
	}
	return color.NRGBA{R: r, G: g, B: b, A: 255}
}
