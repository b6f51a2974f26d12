// Package figure draws the pictures that travel with the headless report:
// one run's curves beside the decomposition of its validation error, or
// several runs' validation curves with the best few highlighted, as PNG or
// SVG bytes.
//
// It is pure, like diagnose and report: data in (a run's judged history
// and its latest judgement, a forecast when there is one, or the plain
// curves and flags of several runs), bytes out. It opens no file, reads no
// flag and knows no terminal. Every number on a picture is written as the
// Markdown report writes it (report.Value, report.Gap), every word for a
// diagnosis or a component is diagnose's, and every text that came from a
// log (a run's name) is made printable before it is drawn.
//
// Drawing is gonum.org/v1/plot's: its axes, its vector canvas for SVG and
// its raster canvas for PNG, with the Liberation fonts it embeds, so the
// same picture comes out on every machine.
package figure
