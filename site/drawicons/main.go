// Command drawicons draws the PNG icons of the web app manifest from the
// same shapes as site/icons/icon.svg (a rounded square, two white lines,
// a dashed amber line between them). Run it from the repository root
// after changing the icon, and commit the PNGs:
//
//	go run ./site/drawicons
//
// The browser test TestIconsMatchSVG checks the PNGs against Chromium's
// rendering of icon.svg.
package main

import (
	"bytes"
	"flag"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"log"
	"math"
	"os"
	"path/filepath"
)

// The design, in the 64 x 64 units of icon.svg's viewBox.
const (
	units      = 64.0
	cornerR    = 12.0 // rx of the rounded square
	strokeHalf = 2.5  // half of stroke-width 5
)

var (
	navy  = color.NRGBA{0x0b, 0x3d, 0x66, 0xff}
	white = color.NRGBA{0xff, 0xff, 0xff, 0xff}
	amber = color.NRGBA{0xff, 0xd2, 0x7a, 0xff}
)

// segment is a stroked line with round caps, y constant.
type segment struct{ x0, x1, y float64 }

// lines are the white strokes; dashes are the amber line x 18..46 at
// y 32 cut by stroke-dasharray "6 5".
var (
	lines  = []segment{{10, 54, 22}, {10, 54, 42}}
	dashes = []segment{{18, 24, 32}, {29, 35, 32}, {40, 46, 32}}
)

// icon describes one PNG: its size in pixels, whether the background is
// full bleed (maskable and Apple touch icons, which the platform crops),
// and how much the strokes are scaled about the centre.
type icon struct {
	name      string
	size      int
	fullBleed bool
	scale     float64
}

// icons are the files written to site/icons/. The maskable icon keeps its
// strokes inside the central circle of radius 40 % that every platform
// mask leaves visible (the W3C manifest's "maskable" safe zone): the
// farthest stroke point is 27.5 units from the centre, times 0.85 is
// 23.4 < 25.6.
var icons = []icon{
	{"icon-192.png", 192, false, 1},
	{"icon-512.png", 512, false, 1},
	{"icon-maskable-512.png", 512, true, 0.85},
	{"apple-touch-icon-180.png", 180, true, 1},
}

func main() {
	dir := flag.String("dir", "site/icons", "folder to write the PNGs to")
	flag.Parse()
	for _, ic := range icons {
		data, err := encode(draw(ic))
		if err != nil {
			log.Fatal(err)
		}
		path := filepath.Join(*dir, ic.name)
		if err := os.WriteFile(path, data, 0o644); err != nil {
			log.Fatal(err)
		}
		fmt.Printf("drawicons: %s (%d x %d)\n", path, ic.size, ic.size)
	}
}

func encode(img image.Image) ([]byte, error) {
	var buf bytes.Buffer
	enc := png.Encoder{CompressionLevel: png.BestCompression}
	err := enc.Encode(&buf, img)
	return buf.Bytes(), err
}

// samples per pixel side for anti-aliasing (16 samples per pixel).
const samples = 4

// draw renders ic by supersampling each pixel: every sample takes the
// colour of the topmost shape that covers it, and the pixel is the mean
// of its samples (premultiplied), as an SVG renderer's coverage would give.
func draw(ic icon) *image.NRGBA {
	img := image.NewNRGBA(image.Rect(0, 0, ic.size, ic.size))
	perUnit := float64(ic.size) / units
	for py := 0; py < ic.size; py++ {
		for px := 0; px < ic.size; px++ {
			var r, g, b, a float64
			for sy := 0; sy < samples; sy++ {
				for sx := 0; sx < samples; sx++ {
					x := (float64(px) + (float64(sx)+0.5)/samples) / perUnit
					y := (float64(py) + (float64(sy)+0.5)/samples) / perUnit
					c, ok := shade(ic, x, y)
					if !ok {
						continue
					}
					r += float64(c.R)
					g += float64(c.G)
					b += float64(c.B)
					a++
				}
			}
			if a == 0 {
				continue
			}
			n := float64(samples * samples)
			img.SetNRGBA(px, py, color.NRGBA{
				R: uint8(math.Round(r / a)),
				G: uint8(math.Round(g / a)),
				B: uint8(math.Round(b / a)),
				A: uint8(math.Round(255 * a / n)),
			})
		}
	}
	return img
}

// shade gives the colour at (x, y) in icon units, or false where the icon
// is transparent.
func shade(ic icon, x, y float64) (color.NRGBA, bool) {
	if !ic.fullBleed && !inRoundedSquare(x, y) {
		return color.NRGBA{}, false
	}
	// Undo the scaling about the centre to find the point in the design.
	dx := (x-units/2)/ic.scale + units/2
	dy := (y-units/2)/ic.scale + units/2
	for _, s := range dashes {
		if s.covers(dx, dy) {
			return amber, true
		}
	}
	for _, s := range lines {
		if s.covers(dx, dy) {
			return white, true
		}
	}
	return navy, true
}

// covers reports whether (x, y) lies within strokeHalf of the segment,
// which is a stroke with round caps.
func (s segment) covers(x, y float64) bool {
	cx := math.Max(s.x0, math.Min(s.x1, x))
	return math.Hypot(x-cx, y-s.y) <= strokeHalf
}

// inRoundedSquare reports whether (x, y) lies in the 64 x 64 square with
// corners rounded to cornerR.
func inRoundedSquare(x, y float64) bool {
	if x < 0 || y < 0 || x > units || y > units {
		return false
	}
	cx := math.Max(cornerR, math.Min(units-cornerR, x))
	cy := math.Max(cornerR, math.Min(units-cornerR, y))
	return math.Hypot(x-cx, y-cy) <= cornerR
}
