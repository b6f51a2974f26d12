package main

import (
	"os/exec"
	"slices"
	"strings"
	"testing"
)

// TestImportArrows enforces the package arrows of DEVELOPERS.md: watch
// reads, diagnose judges, tui shows, and only cmd/fitgap wires them. It
// reads the transitive dependencies with `go list -deps`, so an indirect
// import through a helper package is caught too.
func TestImportArrows(t *testing.T) {
	t.Parallel()
	if _, err := exec.LookPath("go"); err != nil {
		t.Fatalf("the import arrows cannot be checked without the go command: %v", err)
	}
	const mod = "github.com/fitgap/fitgap/"
	charm := []string{"github.com/charmbracelet/", "github.com/NimbleMarkets/", "github.com/muesli/"}
	fsnotify := []string{"github.com/fsnotify/"}
	io := []string{"os", "os/exec", "net", "syscall", "io/ioutil"}
	// Processes and the network, not even through a dependency.
	outside := []string{"os/exec", "net", "net/"}
	// pkgs names our packages with their subpackages (watch/… once split).
	pkgs := func(names ...string) []string {
		var out []string
		for _, n := range names {
			out = append(out, mod+n, mod+n+"/")
		}
		return out
	}
	// Inside watch, tail reads bytes and knows no layout; layout decodes
	// and points assembles, both pure; column names columns.
	tail, layout, points, column := mod+"watch/tail", mod+"watch/layout", mod+"watch/points", mod+"watch/column"
	tests := []struct {
		pkg string
		// deps are forbidden anywhere below the package; direct only in
		// its own imports (the standard library itself uses syscall).
		deps, direct [][]string
	}{
		// diagnose imports nothing of ours.
		{"diagnose", [][]string{charm, fsnotify, outside, {mod}}, [][]string{io}},
		{"report", [][]string{charm, fsnotify, outside, pkgs("watch", "tui", "pipeline")}, [][]string{io}},
		{"watch", [][]string{charm, pkgs("tui", "report", "pipeline")}, nil},
		{"watch/tail", [][]string{charm, {mod + "watch", layout, points, column, mod + "tui", mod + "report", mod + "pipeline"}}, nil},
		{"watch/layout", [][]string{charm, fsnotify, {mod + "watch", tail, mod + "tui", mod + "report", mod + "pipeline"}}, [][]string{io}},
		{"watch/points", [][]string{charm, fsnotify, {mod + "watch", tail, layout, mod + "tui", mod + "report", mod + "pipeline"}}, [][]string{io}},
		{"watch/column", [][]string{charm, fsnotify, {mod + "watch", tail, layout, points, mod + "tui", mod + "report", mod + "pipeline"}}, [][]string{io}},
		// The pipeline feeds the screen through cmd/fitgap; it never draws.
		{"pipeline", [][]string{charm, pkgs("tui", "trainer")}, nil},
		{"tui", [][]string{fsnotify, pkgs("watch", "pipeline")}, nil},
		// The chart engine draws numbers it is handed: no log, no judgement,
		// no event loop, no I/O.
		{"tui/chart", [][]string{fsnotify, pkgs("watch", "diagnose", "report", "pipeline")}, [][]string{io, {"github.com/charmbracelet/bubbletea"}}},
		{"trainer", [][]string{charm, fsnotify, pkgs("watch", "tui", "diagnose", "pipeline")}, nil},
		{"forecast", [][]string{charm, fsnotify, pkgs("watch", "tui", "report", "pipeline")}, [][]string{io}},
		// The picture is drawn from data: no log, no screen, no file.
		{"figure", [][]string{charm, fsnotify, outside, pkgs("watch", "tui", "pipeline", "trainer")}, [][]string{io}},
		// The sweep's domain is pure like diagnose: no files, no screen.
		{"sweep", [][]string{charm, fsnotify, outside, pkgs("watch", "tui", "report", "pipeline")}, [][]string{io}},
		// Discovery reads directories and configuration files; logs only
		// through watch.
		{"sweep/discover", [][]string{charm, outside, pkgs("tui", "report", "pipeline")}, nil},
		// The live sweep drives pipelines; the screen is the command's.
		{"sweep/live", [][]string{charm, outside, pkgs("tui")}, nil},
	}
	for _, tt := range tests {
		t.Run(tt.pkg, func(t *testing.T) {
			// -deps lists the package itself: it is not its own dependency.
			deps := slices.DeleteFunc(goList(t, "-deps", tt.pkg), func(d string) bool { return d == mod+tt.pkg })
			check(t, tt.pkg, deps, tt.deps)
			check(t, tt.pkg, goList(t, "-f={{join .Imports \"\\n\"}}", tt.pkg), tt.direct)
		})
	}
}

func goList(t *testing.T, flag, pkg string) []string {
	t.Helper()
	out, err := exec.Command("go", "list", flag, "../../"+pkg).Output()
	if err != nil {
		t.Fatalf("go list %s %s: %v", flag, pkg, err)
	}
	return strings.Fields(string(out))
}

func check(t *testing.T, pkg string, deps []string, forbidden [][]string) {
	t.Helper()
	for _, dep := range deps {
		for _, group := range forbidden {
			for _, bad := range group {
				if dep == bad || (strings.HasSuffix(bad, "/") && strings.HasPrefix(dep, bad)) {
					t.Errorf("%s depends on %s, which it must not (see DEVELOPERS.md, package arrows)", pkg, dep)
				}
			}
		}
	}
}
