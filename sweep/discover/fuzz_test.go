package discover

import (
	"strings"
	"testing"
	"unicode/utf8"
)

// FuzzParseSidecar feeds configuration files of any bytes to both
// decoders: no panic, every key and value printable and bounded.
func FuzzParseSidecar(f *testing.F) {
	for _, s := range []string{
		`{"lr": 0.1, "opt": {"name": "adam"}}`, "lr: 0.1\nmodel:\n  width: 64\n", "a: [1, {b: 2}]\n",
		`{"a": "\u001b]0;title\u0007"}`, "- 1\n- 2\n", "&a [*a]\n", "? [1]\n: 2\n",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		for _, name := range []string{"args.json", "config.yaml"} {
			p, err := ParseSidecar(name, data)
			if err != nil {
				continue
			}
			for _, x := range p {
				if !utf8.ValidString(x.Key) || !utf8.ValidString(x.Value) || strings.ContainsAny(x.Key+x.Value, "\x1b\x07\r\n") {
					t.Fatalf("unprintable param %q=%q", x.Key, x.Value)
				}
				if len(x.Value) > maxValueBytes {
					t.Fatalf("value of %d bytes", len(x.Value))
				}
			}
		}
	})
}

// FuzzParseDirName: any directory name gives printable params.
func FuzzParseDirName(f *testing.F) {
	for _, s := range []string{"lr=0.01,bs=64", "a=b;c=d", "=,=;", "x=\x1b[2J"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, name string) {
		for _, x := range ParseDirName(name) {
			if x.Key == "" || strings.ContainsAny(x.Key+x.Value, "\x1b,;") {
				t.Fatalf("bad param %q=%q from %q", x.Key, x.Value, name)
			}
		}
	})
}
