package main

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"image/png"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// sizedSweep writes an invented sweep whose runs differ in training-set
// size (hparams.json) and learning rate: at each size the best error
// follows 0.04 + 2·m^(−0.5), the other rate sits 3 points above; the
// smallest size at the other rate plateaus far above the rest.
func sizedSweep(t *testing.T) string {
	t.Helper()
	root := t.TempDir()
	for _, m := range []int{500, 1000, 2000, 4000} {
		for _, lr := range []string{"0.01", "0.001"} {
			floor := 0.04 + 2/float64(sqrtInt(m))
			if lr == "0.001" {
				floor += 0.03
			}
			dir := filepath.Join(root, fmt.Sprintf("lr=%s,n=%d", lr, m))
			var b strings.Builder
			b.WriteString("epoch,acc,val_acc\n")
			for e := 1; e <= 20; e++ {
				v := floor + (0.5-floor)/float64(e)
				fmt.Fprintf(&b, "%d,%.4f,%.4f\n", e, 1-(v-0.01), 1-v)
			}
			os.MkdirAll(dir, 0o755)
			writeFile(t, filepath.Join(dir, "metrics.csv"), b.String())
			writeFile(t, filepath.Join(dir, "hparams.json"), fmt.Sprintf(`{"lr": %s, "train_size": %d, "epochs": 20}`, lr, m))
		}
	}
	return root
}

func sqrtInt(m int) int {
	r := 0
	for (r+1)*(r+1) <= m {
		r++
	}
	return r
}

// svgTexts returns the texts of an SVG, parsed as XML.
func svgTexts(t *testing.T, b []byte) []string {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(b))
	var texts []string
	inText := false
	for {
		tok, err := dec.Token()
		if err != nil {
			break
		}
		switch tok := tok.(type) {
		case xml.StartElement:
			inText = tok.Name.Local == "text"
		case xml.EndElement:
			inText = false
		case xml.CharData:
			if inText {
				texts = append(texts, string(tok))
			}
		}
	}
	if len(texts) == 0 {
		t.Fatalf("no text in the SVG")
	}
	return texts
}

// TestReportDir_Plot: report DIR --plot draws the sweep — the legend's
// best runs in the table's order with its numbers, the hopeless counted as
// the Markdown counts them, the data-size panel since the runs differ in
// size — and the Markdown is the report's with one line more, the picture
// by its relative path; --json is the same with or without it.
func TestReportDir_Plot(t *testing.T) {
	t.Parallel()
	root := sizedSweep(t)
	plain, stderr, code := runCLI(t, "", "report", "--bayes-error", "3%", root)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	wd, _ := os.Getwd()
	dir := t.TempDir()
	svg := filepath.Join(dir, "sweep.svg")
	md, stderr, code := runCLI(t, "", "report", "--bayes-error", "3%", "--plot", svg, root)
	if code != 0 || stderr != "" {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	rel, _ := filepath.Rel(wd, svg)
	line := "![Validation curves of the sweep " + root + "](" + filepath.ToSlash(rel) + ")\n\n"
	if !strings.Contains(md, line) {
		t.Fatalf("Markdown lacks %q:\n%s", line, md)
	}
	if strings.Replace(md, line, "", 1) != plain {
		t.Errorf("the picture changed more of the Markdown than its line:\n%s", md)
	}
	b, err := os.ReadFile(svg)
	if err != nil {
		t.Fatal(err)
	}
	texts := strings.Join(svgTexts(t, b), "\n")
	// The table's first five rows, as the legend should rank them.
	row := regexp.MustCompile(`(?m)^\| (\d) \| ([^|]+) \| [^|]+ \| [^|]+ \| ([0-9.]+%) \(`)
	rows := row.FindAllStringSubmatch(plain, -1)
	if len(rows) < 5 {
		t.Fatalf("table rows %q", rows)
	}
	for _, r := range rows[:5] {
		if want := r[1] + ". " + r[2] + " " + r[3]; !strings.Contains(texts, want) {
			t.Errorf("the legend lacks %q (the table's row):\n%s", want, texts)
		}
	}
	hopeless := regexp.MustCompile(`· (\d+) hopeless`).FindStringSubmatch(plain)
	if hopeless == nil || hopeless[1] != "0" && !strings.Contains(texts, hopeless[1]+" judged hopeless") {
		t.Errorf("the picture does not count the %v hopeless runs of the report:\n%s", hopeless, texts)
	}
	for _, w := range []string{root, "best val by training-set size", "optimal error 3.0%"} {
		if !strings.Contains(texts, w) {
			t.Errorf("the picture lacks %q:\n%s", w, texts)
		}
	}

	pngPath := filepath.Join(dir, "sweep.png")
	a, _, code := runCLI(t, "", "report", "--json", "--plot", pngPath, root)
	j, _, _ := runCLI(t, "", "report", "--json", root)
	if code != 0 || a != j {
		t.Errorf("exit %d; JSON with --plot differs from without", code)
	}
	pb, err := os.ReadFile(pngPath)
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(pb))
	if err != nil || img.Bounds().Dx() != 800 || img.Bounds().Dy() != 500 {
		t.Fatalf("not an 800×500 PNG: %v", err)
	}
}

// TestReportDir_PlotRefused: a bad picture path is refused before the
// sweep is read, one that is a run's log once the runs are found, and
// neither the logs nor standard output are written.
func TestReportDir_PlotRefused(t *testing.T) {
	t.Parallel()
	root := sizedSweep(t)
	// A log may have any name: a run whose log is called curves.png.
	odd := filepath.Join(root, "odd", "curves.png")
	os.MkdirAll(filepath.Dir(odd), 0o755)
	logText := "epoch,acc,val_acc\n1,0.6,0.5\n2,0.7,0.6\n3,0.8,0.7\n"
	writeFile(t, odd, logText)
	glob := filepath.Join(root, "*", "*.{csv,png}")
	tests := []struct {
		name, plot, want string
	}{
		{"Extension", filepath.Join(root, "c.jpg"), "pictures are .svg or .png"},
		{"NoDirectory", filepath.Join(root, "missing", "c.png"), "does not exist"},
		{"ARunsLog", odd, "is the log being read"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			out, stderr, code := runCLI(t, "", "report", "--plot", tt.plot, glob)
			if code != exitUsage || !strings.Contains(stderr, tt.want) || out != "" {
				t.Errorf("exit %d, stderr %q, stdout %d bytes; want %d and %q, nothing printed", code, stderr, len(out), exitUsage, tt.want)
			}
		})
	}
	if b, _ := os.ReadFile(odd); string(b) != logText {
		t.Errorf("the log changed: %q", b)
	}
}

// TestReportDir_PlotNothingToDraw: runs without a validation value leave
// nothing to draw: the report is printed whole, without the picture, and
// the status is 1 with the reason.
func TestReportDir_PlotNothingToDraw(t *testing.T) {
	t.Parallel()
	root := t.TempDir()
	for _, r := range []string{"a", "b"} {
		os.MkdirAll(filepath.Join(root, r), 0o755)
		writeFile(t, filepath.Join(root, r, "metrics.csv"), "epoch,loss\n1,0.9\n2,0.8\n3,0.7\n")
	}
	plain, _, _ := runCLI(t, "", "report", root)
	pic := filepath.Join(t.TempDir(), "p.svg")
	md, stderr, code := runCLI(t, "", "report", "--plot", pic, root)
	if code != 1 || md != plain || !strings.Contains(stderr, "no evaluation point to draw") {
		t.Errorf("exit %d, stderr %q; want 1, the reason, and the plain report:\n%s", code, stderr, md)
	}
	if _, err := os.Stat(pic); err == nil {
		t.Error("a picture was written")
	}
}
