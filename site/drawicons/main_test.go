package main

import (
	"image"
	"image/png"
	"os"
	"path/filepath"
	"testing"
)

// TestCommittedIconsAreCurrent: the PNGs in site/icons are what this
// program draws now (run `go run ./site/drawicons` after changing it).
func TestCommittedIconsAreCurrent(t *testing.T) {
	for _, ic := range icons {
		f, err := os.Open(filepath.Join("..", "icons", ic.name))
		if err != nil {
			t.Fatal(err)
		}
		got, err := png.Decode(f)
		f.Close()
		if err != nil {
			t.Fatalf("%s: %v", ic.name, err)
		}
		want := draw(ic)
		if got.Bounds() != want.Bounds() {
			t.Fatalf("%s is %v, want %v", ic.name, got.Bounds(), want.Bounds())
		}
		if n := differentPixels(got, want); n > 0 {
			t.Errorf("%s: %d pixels differ from what drawicons draws; run go run ./site/drawicons", ic.name, n)
		}
	}
}

func differentPixels(a image.Image, b *image.NRGBA) int {
	n := 0
	r := b.Bounds()
	for y := r.Min.Y; y < r.Max.Y; y++ {
		for x := r.Min.X; x < r.Max.X; x++ {
			ar, ag, ab, aa := a.At(x, y).RGBA()
			br, bg, bb, ba := b.At(x, y).RGBA()
			if ar != br || ag != bg || ab != bb || aa != ba {
				n++
			}
		}
	}
	return n
}

// TestMaskableSafeZone: every stroke pixel of the maskable icon lies inside
// the centre circle of radius 40 % of the size, the part every platform
// mask keeps (W3C Web Application Manifest, "maskable" icons).
func TestMaskableSafeZone(t *testing.T) {
	for _, ic := range icons {
		if !ic.fullBleed || ic.scale == 1 {
			continue
		}
		img := draw(ic)
		c := float64(ic.size) / 2
		limit := 0.4 * float64(ic.size)
		for y := 0; y < ic.size; y++ {
			for x := 0; x < ic.size; x++ {
				if img.NRGBAAt(x, y) == navy {
					continue
				}
				dx, dy := float64(x)+0.5-c, float64(y)+0.5-c
				if dx*dx+dy*dy > limit*limit {
					t.Fatalf("%s: stroke pixel (%d, %d) outside the safe zone", ic.name, x, y)
				}
			}
		}
	}
}
