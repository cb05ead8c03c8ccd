package render

import (
	"fmt"
	"image/color"
)

// rgb is an opaque colour.
type rgb struct{ R, G, B uint8 }

func (c rgb) hex() string { return fmt.Sprintf("#%02x%02x%02x", c.R, c.G, c.B) }

func (c rgb) alpha(a float64) color.NRGBA {
	return color.NRGBA{R: c.R, G: c.G, B: c.B, A: uint8(a*255 + 0.5)}
}

// The colours of the Okabe-Ito palette (Okabe & Ito 2008, "Color universal design") that the plots use,
// plus ink and paper.
var (
	colInk       = rgb{0x22, 0x22, 0x22}
	colMuted     = rgb{0x5f, 0x5f, 0x5f}
	colRule      = rgb{0xd9, 0xd9, 0xd9}
	colPaper     = rgb{0xff, 0xff, 0xff}
	colSky       = rgb{0x56, 0xb4, 0xe9}
	colGreen     = rgb{0x00, 0x9e, 0x73}
	colBlue      = rgb{0x00, 0x72, 0xb2}
	colVermilion = rgb{0xd5, 0x5e, 0x00}
	colPurple    = rgb{0xcc, 0x79, 0xa7}
)

// Roles of the colours in every plot.
var (
	colPublished = colBlue      // published studies and the published-only estimate
	colRegistry  = colVermilion // registry-only trials and the augmented estimate
	colImputed   = colPurple    // trim-and-fill's imputed studies
	colEgger     = colGreen     // Egger's line and band
	colContour   = colMuted     // significance contours
)
