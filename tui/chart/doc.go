// Package chart draws the screen's charts as lines of terminal text: the
// main chart of one metric by epoch (curves in braille dots with a glyph
// per series, a band behind them, axes with round ticks on a linear or
// logarithmic scale, a cursor, markers for the best epoch, non-finite
// values and values off the scale) and one-row sparklines.
//
// It knows nothing of logs, judgements or the screen's model: the caller
// hands it plotted numbers and inks, and a Palette that turns an ink into
// escape sequences. The pieces:
//
//   - Chart.Draw renders a Spec at a size into reused scratch memory.
//   - YRange and YAxis pick the y range, leaving a steep first few epochs
//     off the scale so they do not squash the rest.
//   - LTTB, LTTBRuns and LTTBBucket downsample a series to about what the
//     plot can show (largest-triangle-three-buckets, keeping gaps).
//   - Sparkline draws a one-row column chart of a window of values.
//   - Grid is the cell grid everything is drawn into, rendered one styled
//     run per stretch of same-ink cells.
//   - FormatNum and FormatFit print numbers for labels and narrow columns.
//
// Dots, lines and sparkline columns come from the chart library ntcharts
// (braille grid, line tracing, sparkline model); the layout, the ticks,
// the clipping and the rendering are ours.
package chart
