package main

import (
	"os/exec"
	"strings"
	"testing"
)

// TestImportArrows enforces the package arrows of DEVELOPERS.md: watch
// reads, diagnose judges, tui shows, and only cmd/fitgap wires them. It
// reads the transitive dependencies with `go list -deps`, so an indirect
// import through a helper package is caught too.
func TestImportArrows(t *testing.T) {
	if _, err := exec.LookPath("go"); err != nil {
		t.Skip("go command not found")
	}
	const mod = "github.com/fitgap/fitgap/"
	charm := []string{"github.com/charmbracelet/", "github.com/NimbleMarkets/", "github.com/muesli/"}
	fsnotify := []string{"github.com/fsnotify/"}
	io := []string{"os", "os/exec", "net", "syscall", "io/ioutil"}
	// Inside watch, tail reads bytes and knows no layout; layout decodes
	// and points assembles, both pure; column names columns.
	tail, layout, points, column := mod+"watch/tail", mod+"watch/layout", mod+"watch/points", mod+"watch/column"
	tests := []struct {
		pkg string
		// deps are forbidden anywhere below the package; direct only in
		// its own imports (the standard library itself uses syscall).
		deps, direct [][]string
	}{
		{"diagnose", [][]string{charm, fsnotify, {mod + "watch", mod + "tui", mod + "report"}}, [][]string{io}},
		{"report", [][]string{charm, fsnotify, {mod + "watch", mod + "tui"}}, [][]string{io}},
		{"watch", [][]string{charm, {mod + "tui", mod + "report"}}, nil},
		{"watch/tail", [][]string{charm, {mod + "watch", layout, points, column, mod + "tui", mod + "report"}}, nil},
		{"watch/layout", [][]string{charm, fsnotify, {mod + "watch", tail, mod + "tui", mod + "report"}}, [][]string{io}},
		{"watch/points", [][]string{charm, fsnotify, {mod + "watch", tail, layout, mod + "tui", mod + "report"}}, [][]string{io}},
		{"watch/column", [][]string{charm, fsnotify, {mod + "watch", tail, layout, points, mod + "tui", mod + "report"}}, [][]string{io}},
		{"tui", [][]string{fsnotify, {mod + "watch"}}, nil},
		{"trainer", [][]string{charm, fsnotify, {mod + "watch", mod + "tui", mod + "diagnose"}}, nil},
	}
	for _, tt := range tests {
		t.Run(tt.pkg, func(t *testing.T) {
			check(t, tt.pkg, goList(t, "-deps", tt.pkg), tt.deps)
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
