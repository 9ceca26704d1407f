package main

import (
	"bytes"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"poise/internal/atomicfile"
)

// writeStackedPlots draws plots one above the other on a page of the given
// size and writes it atomically to path, in the format its extension names
// (svg, png, pdf, …).
func writeStackedPlots(path string, plots []*plot.Plot, width, height vg.Length) error {
	format := strings.TrimPrefix(strings.ToLower(filepath.Ext(path)), ".")
	canvas, err := draw.NewFormattedCanvas(width, height, format)
	if err != nil {
		return err
	}
	tiles := draw.Tiles{Rows: len(plots), Cols: 1, PadX: vg.Millimeter, PadY: 4 * vg.Millimeter,
		PadTop: 2 * vg.Millimeter, PadBottom: 2 * vg.Millimeter, PadLeft: 2 * vg.Millimeter, PadRight: 4 * vg.Millimeter}
	grid := make([][]*plot.Plot, len(plots))
	for i, p := range plots {
		grid[i] = []*plot.Plot{p}
	}
	cells := plot.Align(grid, tiles, draw.New(canvas))
	for r := range grid {
		grid[r][0].Draw(cells[r][0])
	}
	var buf bytes.Buffer
	if _, err := canvas.WriteTo(&buf); err != nil {
		return err
	}
	return atomicfile.Write(path, buf.Bytes())
}
