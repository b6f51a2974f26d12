package discover

import (
	"strings"
	"testing"
)

func TestParseSidecar(t *testing.T) {
	tests := []struct {
		name, file, text string
		want             string // k=v;…
		err              string
	}{
		{"JSONNumbersAsWritten", "args.json", `{"lr": 1e-3, "bs": 64, "wd": 0.00010}`, "bs=64;lr=1e-3;wd=0.00010", ""},
		{"JSONNested", "config.json", `{"opt": {"name": "adam", "betas": [0.9, 0.999]}, "amp": true, "note": null}`,
			"amp=true;note=null;opt.betas=[0.9,0.999];opt.name=adam", ""},
		{"YAML", "hparams.yaml", "lr: 0.01\nlayers: 3\nact: relu\nsched:\n  kind: cosine\n", "act=relu;layers=3;lr=0.01;sched.kind=cosine", ""},
		{"YAMLNumberKeys", "config.yml", "1: one\ntrue: yes\n", "1=one;true=yes", ""},
		{"EmptyYAML", "config.yaml", "", "", ""},
		{"EscapesRemoved", "args.json", `{"name": "a\u001b[31mred"}`, "name=ared", ""},
		{"NotAMapping", "args.json", `[1, 2]`, "", "not a mapping"},
		{"BadJSON", "args.json", `{"lr": `, "", "args.json"},
		{"BadYAML", "config.yaml", "a: [1, 2\n", "", "config.yaml"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			p, err := ParseSidecar(tt.file, []byte(tt.text))
			if tt.err != "" {
				if err == nil || !strings.Contains(err.Error(), tt.err) {
					t.Fatalf("err %v, want one containing %q", err, tt.err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			var kv []string
			for _, x := range p {
				kv = append(kv, x.Key+"="+x.Value)
			}
			if got := strings.Join(kv, ";"); got != tt.want {
				t.Errorf("params %q, want %q", got, tt.want)
			}
		})
	}
	long := `{"v": "` + strings.Repeat("é", 300) + `"}`
	p, _ := ParseSidecar("args.json", []byte(long))
	if len(p[0].Value) > maxValueBytes || !strings.HasSuffix(p[0].Value, "…") {
		t.Errorf("a long value is not cut: %d bytes", len(p[0].Value))
	}
	deep := strings.Repeat(`{"a":`, 40) + "1" + strings.Repeat("}", 40)
	if _, err := ParseSidecar("args.json", []byte(deep)); err == nil {
		t.Error("nesting beyond the limit accepted")
	}
}

func TestIsSidecar(t *testing.T) {
	for name, want := range map[string]bool{
		"config.yaml": true, "hparams.yaml": true, "args.json": true, "train_config.yml": true, "Params.JSON": true,
		"metrics.json": false, "trainer_state.json": false, "config.txt": false, "notes.yaml": false,
	} {
		if got := IsSidecar(name); got != want {
			t.Errorf("IsSidecar(%q) = %v, want %v", name, got, want)
		}
	}
}

func TestParseDirName(t *testing.T) {
	tests := []struct{ in, want string }{
		{"lr=0.01,bs=64", "bs=64;lr=0.01"},
		{"run-3,lr=0.1", "lr=0.1"},
		{"lr=1e-3;wd=0", "lr=1e-3;wd=0"},
		{"plain", ""},
		{"=5,a=", "a="},
		{"k=v=w", "k=v=w"},
	}
	for _, tt := range tests {
		var kv []string
		for _, x := range ParseDirName(tt.in) {
			kv = append(kv, x.Key+"="+x.Value)
		}
		if got := strings.Join(kv, ";"); got != tt.want {
			t.Errorf("ParseDirName(%q) = %q, want %q", tt.in, got, tt.want)
		}
	}
}
