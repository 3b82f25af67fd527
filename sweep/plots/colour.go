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

// labToSRGB converts L*a*b* to 8-bit sRGB, clipping each channel to the
// gamut.
func labToSRGB(c lab) color.NRGBA {
	fy := (c.L + 16) / 116
	fx := fy + c.A/500
	fz := fy - c.B/200
	x, y, z := whiteX*labFInv(fx), whiteY*labFInv(fy), whiteZ*labFInv(fz)
	r := 3.2404542*x - 1.5371385*y - 0.4985314*z
	g := -0.9692660*x + 1.8760108*y + 0.0415560*z
	b := 0.0556434*x - 0.2040259*y + 1.0572252*z
	q := func(v float64) uint8 {
		v = delinearise(math.Min(1, math.Max(0, v)))
		return uint8(math.Round(255 * v))
	}
	return color.NRGBA{R: q(r), G: q(g), B: q(b), A: 255}
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
