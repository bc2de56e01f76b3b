package figure

import (
	"image/color"
	"math"
)

// ColorMap maps a fraction in [0, 1] to a colour. It is a few control
// colours interpolated in the Oklab space (Ottosson 2020, "A perceptual
// color space for image processing", constants below from memory), so
// that equal steps of value look like roughly equal steps of colour,
// sampled into a table of lutSize entries. The end colours are the first
// and last control colours exactly.
type ColorMap struct {
	Name  string
	Stops []color.RGBA
	lut   []color.RGBA
}

// lutSize − 1 is a multiple of 4, so that the inner control colours of a
// five-colour map fall exactly on table entries.
const lutSize = 1025

// SequentialMap runs from deep navy through slate blue, teal and sage to
// pale sand, with lightness rising all the way: for positive fields such
// as depth. It ends at exactly #16203f and #f3ecb8.
func SequentialMap() *ColorMap {
	return newMap("shoal", []color.RGBA{
		{0x16, 0x20, 0x3f, 0xff},
		{0x2a, 0x4f, 0x7a, 0xff},
		{0x2f, 0x8a, 0x83, 0xff},
		{0x8c, 0xbf, 0x72, 0xff},
		{0xf3, 0xec, 0xb8, 0xff},
	})
}

// DivergingMap runs from deep blue through a warm near-white at the
// middle to deep brick, the two halves of equal lightness at equal
// distances from the middle: for signed fields such as vorticity, centred
// on zero. It is exactly #1d3a7a, #f4f1ec and #721a0f at 0, ½ and 1.
func DivergingMap() *ColorMap {
	return newMap("twofold", []color.RGBA{
		{0x1d, 0x3a, 0x7a, 0xff},
		{0x6a, 0x95, 0xcf, 0xff},
		{0xf4, 0xf1, 0xec, 0xff},
		{0xcc, 0x7b, 0x57, 0xff},
		{0x72, 0x1a, 0x0f, 0xff},
	})
}

func newMap(name string, stops []color.RGBA) *ColorMap {
	m := &ColorMap{Name: name, Stops: stops, lut: make([]color.RGBA, lutSize)}
	labs := make([][3]float64, len(stops))
	for i, s := range stops {
		labs[i] = toOklab(s)
	}
	segs := float64(len(stops) - 1)
	for k := range m.lut {
		f := float64(k) / (lutSize - 1) * segs
		i := min(int(f), len(stops)-2)
		t := f - float64(i)
		switch {
		case t == 0:
			m.lut[k] = stops[i]
		case t == 1:
			m.lut[k] = stops[i+1]
		default:
			a, b := labs[i], labs[i+1]
			m.lut[k] = fromOklab([3]float64{a[0] + t*(b[0]-a[0]), a[1] + t*(b[1]-a[1]), a[2] + t*(b[2]-a[2])})
		}
	}
	return m
}

// At returns the colour of fraction f, clamped to [0, 1]; NaN gives the
// middle colour.
func (m *ColorMap) At(f float64) color.RGBA {
	if math.IsNaN(f) {
		f = 0.5
	}
	f = math.Max(0, math.Min(1, f))
	return m.lut[int(math.Round(f*(lutSize-1)))]
}

// srgbToLinear and linearToSRGB are the sRGB transfer functions
// (IEC 61966-2-1).
func srgbToLinear(c float64) float64 {
	if c <= 0.04045 {
		return c / 12.92
	}
	return math.Pow((c+0.055)/1.055, 2.4)
}

func linearToSRGB(c float64) float64 {
	if c <= 0.0031308 {
		return 12.92 * c
	}
	return 1.055*math.Pow(c, 1/2.4) - 0.055
}

func toOklab(c color.RGBA) [3]float64 {
	r, g, b := srgbToLinear(float64(c.R)/255), srgbToLinear(float64(c.G)/255), srgbToLinear(float64(c.B)/255)
	l := math.Cbrt(0.4122214708*r + 0.5363325363*g + 0.0514459929*b)
	m := math.Cbrt(0.2119034982*r + 0.6806995451*g + 0.1073969566*b)
	s := math.Cbrt(0.0883024619*r + 0.2817188376*g + 0.6299787005*b)
	return [3]float64{
		0.2104542553*l + 0.7936177850*m - 0.0040720468*s,
		1.9779984951*l - 2.4285922050*m + 0.4505937099*s,
		0.0259040371*l + 0.7827717662*m - 0.8086757660*s,
	}
}

func fromOklab(lab [3]float64) color.RGBA {
	L, a, b := lab[0], lab[1], lab[2]
	l := L + 0.3963377774*a + 0.2158037573*b
	m := L - 0.1055613458*a - 0.0638541728*b
	s := L - 0.0894841775*a - 1.2914855480*b
	l, m, s = l*l*l, m*m*m, s*s*s
	to8 := func(v float64) uint8 {
		return uint8(math.Round(255 * math.Max(0, math.Min(1, linearToSRGB(v)))))
	}
	return color.RGBA{
		to8(+4.0767416621*l - 3.3077115913*m + 0.2309699292*s),
		to8(-1.2684380046*l + 2.6097574011*m - 0.3413193965*s),
		to8(-0.0041960863*l - 0.7034186147*m + 1.7076147010*s),
		0xff,
	}
}
