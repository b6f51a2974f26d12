package discover

import (
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

const csvLog = "epoch,loss,acc,val_loss,val_acc\n1,0.6,0.7,0.65,0.68\n2,0.5,0.8,0.55,0.75\n"

// writeFile writes a file, making its directories.
func writeFile(t *testing.T, path, text string) {
	t.Helper()
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
}

// names lists the runs' names and params as "name{k=v,…}".
func names(runs []Run) []string {
	var out []string
	for _, r := range runs {
		var kv []string
		for _, p := range r.Params {
			kv = append(kv, p.Key+"="+p.Value)
		}
		out = append(out, r.Name+"{"+strings.Join(kv, ",")+"}")
	}
	return out
}

func TestFinder_ScanDirectory(t *testing.T) {
	root := t.TempDir()
	writeFile(t, filepath.Join(root, "lr=0.1,bs=32", "metrics.csv"), csvLog)
	writeFile(t, filepath.Join(root, "lr=0.1,bs=32", "hparams.yaml"), "lr: 0.1\nmodel:\n  width: 64\n  layers: [2, 3]\n")
	writeFile(t, filepath.Join(root, "lr=0.01,bs=32", "metrics.csv"), csvLog)
	writeFile(t, filepath.Join(root, "notes.txt"), "We tried three learning rates this week.\n")
	writeFile(t, filepath.Join(root, "console", "train.log"), "Loading data...\nEpoch 1/10 - loss: 0.5 - acc: 0.8 - val_loss: 0.6 - val_acc: 0.7\n")
	writeFile(t, filepath.Join(root, "empty", "metrics.csv"), "")
	writeFile(t, filepath.Join(root, ".cache", "metrics.csv"), csvLog)
	writeFile(t, filepath.Join(root, "stopped", "metrics.csv"), csvLog)
	writeFile(t, filepath.Join(root, "stopped", "STOP.json"), `{"epoch": 3}`)
	f, err := New([]string{root}, Options{Skip: func(b string) bool { return b == "STOP.json" }})
	if err != nil {
		t.Fatal(err)
	}
	got := names(f.Scan())
	want := []string{
		"console{}",
		"lr=0.01,bs=32{bs=32,lr=0.01}",
		// The sidecar's lr wins over the directory name's; nested keys
		// are joined with dots, lists written compactly.
		"lr=0.1,bs=32{bs=32,lr=0.1,model.layers=[2,3],model.width=64}",
		"stopped{}",
	}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("Scan =\n%v\nwant\n%v", got, want)
	}
	if again := f.Scan(); len(again) != 0 {
		t.Errorf("a second Scan found %v again", names(again))
	}
	// The empty log gains a header: a rescan of its directory finds it.
	writeFile(t, filepath.Join(root, "empty", "metrics.csv"), csvLog)
	if got := names(f.Rescan(filepath.Join(root, "empty"))); !reflect.DeepEqual(got, []string{"empty{}"}) {
		t.Errorf("Rescan after the log grew = %v", got)
	}
	// A run that appears later in a new directory.
	writeFile(t, filepath.Join(root, "late", "deep", "metrics.csv"), csvLog)
	if got := names(f.Rescan(root)); !reflect.DeepEqual(got, []string{"late/deep{}"}) {
		t.Errorf("Rescan of the root = %v", got)
	}
	dirs := f.Dirs()
	for _, d := range []string{root, filepath.Join(root, "late", "deep")} {
		if !contains(dirs, d) {
			t.Errorf("Dirs lacks %s: %v", d, dirs)
		}
	}
	// The sidecar changes: the run comes back with its new params.
	writeFile(t, filepath.Join(root, "lr=0.01,bs=32", "config.json"), `{"seed": 7}`)
	if got := names(f.Rescan(filepath.Join(root, "lr=0.01,bs=32"))); !reflect.DeepEqual(got, []string{"lr=0.01,bs=32{bs=32,lr=0.01,seed=7}"}) {
		t.Errorf("Rescan after a new sidecar = %v", got)
	}
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

func TestFinder_Globs(t *testing.T) {
	root := t.TempDir()
	for _, d := range []string{"a", "b", "c/d"} {
		writeFile(t, filepath.Join(root, "runs", d, "metrics.csv"), csvLog)
		writeFile(t, filepath.Join(root, "runs", d, "other.csv"), csvLog)
	}
	tests := []struct {
		name    string
		pattern string
		want    []string
	}{
		{"OneLevel", "runs/*/metrics.csv", []string{"a{}", "b{}"}},
		{"AnyDepth", "runs/**/metrics.csv", []string{"a{}", "b{}", "c/d{}"}},
		{"Braces", "runs/{a,b}/other.csv", []string{"a{}", "b{}"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			f, err := New([]string{filepath.Join(root, tt.pattern)}, Options{})
			if err != nil {
				t.Fatal(err)
			}
			if got := names(f.Scan()); !reflect.DeepEqual(got, tt.want) {
				t.Errorf("Scan = %v, want %v", got, tt.want)
			}
		})
	}
	if _, err := New([]string{filepath.Join(root, "runs/[a/metrics.csv")}, Options{}); err == nil {
		t.Error("a bad glob was accepted")
	}
}

func TestFinder_FilesAndNames(t *testing.T) {
	root := t.TempDir()
	a := filepath.Join(root, "exp", "a.csv")
	b := filepath.Join(root, "exp", "b.csv")
	c := filepath.Join(root, "other", "run1", "log.csv")
	missing := filepath.Join(root, "other", "run2", "log.csv")
	writeFile(t, a, csvLog)
	writeFile(t, b, "not a log at all\n") // named explicitly: taken as given
	writeFile(t, c, csvLog)
	f, err := New([]string{a, b, c, missing}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	got := names(f.Scan())
	want := []string{"exp/a.csv{}", "exp/b.csv{}", "other/run1{}", "other/run2{}"}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("Scan = %v, want %v", got, want)
	}
	if f.Root() != root {
		t.Errorf("Root = %s, want %s", f.Root(), root)
	}
	if _, err := New(nil, Options{}); err == nil {
		t.Error("no paths accepted")
	}
}

func TestFinder_BadSidecarIsANotice(t *testing.T) {
	root := t.TempDir()
	writeFile(t, filepath.Join(root, "r", "metrics.csv"), csvLog)
	writeFile(t, filepath.Join(root, "r", "args.json"), `{"lr": 0.1,`)
	f, _ := New([]string{root}, Options{})
	runs := f.Scan()
	if len(runs) != 1 || len(runs[0].Params) != 0 {
		t.Fatalf("runs %v", names(runs))
	}
	if n := f.Notices(); len(n) != 1 || !strings.Contains(n[0], "args.json") {
		t.Errorf("notices %v", n)
	}
	if n := f.Notices(); len(n) != 0 {
		t.Errorf("notices not forgotten: %v", n)
	}
}
