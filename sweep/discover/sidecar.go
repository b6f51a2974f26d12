package discover

import (
	"bytes"
	"encoding/json"
	"fmt"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"github.com/goccy/go-yaml"

	"github.com/fitgap/fitgap/diagnose"
	"github.com/fitgap/fitgap/sweep"
)

// Limits on a sidecar file: a run's configuration is a few kilobytes; a
// larger file is not one (a dataset manifest, a vocabulary). Units: bytes,
// nesting levels, keys, bytes of one value.
const (
	maxSidecarBytes = 1 << 20
	maxDepth        = 16
	maxParams       = 2000
	maxValueBytes   = 200
)

// sidecarStems are the names training scripts give a run's configuration
// file, before the extension (common practice: argument dumps, saved
// hyperparameters, config files).
var sidecarStems = map[string]bool{
	"config": true, "configs": true, "cfg": true, "args": true, "arguments": true,
	"hparams": true, "hyperparameters": true, "hyperparams": true, "params": true,
	"parameters": true, "settings": true, "opts": true, "options": true, "flags": true,
}

// IsSidecar reports whether a file name is a run's configuration file:
// one of the usual stems (config, args, hparams, params…) with .json,
// .yaml or .yml, optionally after a prefix ("train_config.yaml").
func IsSidecar(base string) bool {
	ext := strings.ToLower(filepath.Ext(base))
	if ext != ".json" && ext != ".yaml" && ext != ".yml" {
		return false
	}
	stem := strings.ToLower(strings.TrimSuffix(base, filepath.Ext(base)))
	if sidecarStems[stem] {
		return true
	}
	if i := strings.LastIndexAny(stem, "_-."); i >= 0 {
		return sidecarStems[stem[i+1:]]
	}
	return false
}

// ParseSidecar reads a configuration file's bytes (JSON when name ends in
// .json, else YAML) into params: nested keys joined with dots, lists and
// other values written as compact text. from names the source in each
// Param. Keys and values are made printable and values cut to a display
// length.
func ParseSidecar(name string, data []byte) (sweep.Params, error) {
	if len(data) > maxSidecarBytes {
		return nil, fmt.Errorf("%s: %d bytes, more than a configuration file (%d)", name, len(data), maxSidecarBytes)
	}
	var doc any
	if strings.EqualFold(filepath.Ext(name), ".json") {
		dec := json.NewDecoder(bytes.NewReader(data))
		dec.UseNumber()
		if err := dec.Decode(&doc); err != nil {
			return nil, fmt.Errorf("%s: %w", name, err)
		}
	} else if err := yaml.Unmarshal(data, &doc); err != nil {
		return nil, fmt.Errorf("%s: %s", name, firstLine(err.Error()))
	}
	m, ok := asMap(doc)
	if !ok {
		if doc == nil {
			return nil, nil // an empty file
		}
		return nil, fmt.Errorf("%s: not a mapping of names to values", name)
	}
	var out sweep.Params
	if err := flatten(&out, "", m, 0, filepath.Base(name)); err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	return sweep.Sorted(out), nil
}

// flatten adds m's values to out under prefix.
func flatten(out *sweep.Params, prefix string, m map[string]any, depth int, from string) error {
	if depth > maxDepth {
		return fmt.Errorf("nested more than %d levels", maxDepth)
	}
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		key := strings.TrimSpace(diagnose.Printable(k))
		if key == "" {
			continue // a key that prints as nothing names no column
		}
		if prefix != "" {
			key = prefix + "." + key
		}
		if sub, ok := asMap(m[k]); ok && len(sub) > 0 {
			if err := flatten(out, key, sub, depth+1, from); err != nil {
				return err
			}
			continue
		}
		if len(*out) >= maxParams {
			return fmt.Errorf("more than %d values", maxParams)
		}
		*out = append(*out, sweep.Param{Key: key, Value: valueText(m[k]), From: from})
	}
	return nil
}

// valueText writes a value as a table shows it.
func valueText(v any) string {
	var s string
	switch x := v.(type) {
	case nil:
		s = "null"
	case string:
		s = x
	case json.Number:
		s = x.String()
	case bool:
		s = strconv.FormatBool(x)
	case float64:
		s = strconv.FormatFloat(x, 'g', -1, 64)
	case float32:
		s = strconv.FormatFloat(float64(x), 'g', -1, 32)
	case int:
		s = strconv.Itoa(x)
	case int64:
		s = strconv.FormatInt(x, 10)
	case uint64:
		s = strconv.FormatUint(x, 10)
	default:
		b, err := json.Marshal(x)
		if err != nil {
			s = fmt.Sprint(x)
		} else {
			s = string(b)
		}
	}
	return cut(diagnose.Printable(s), maxValueBytes)
}

// cut shortens s to at most n bytes on a rune boundary, marking the cut.
func cut(s string, n int) string {
	if len(s) <= n {
		return s
	}
	i := n - len("…")
	for i > 0 && (s[i]&0xC0) == 0x80 {
		i--
	}
	return s[:i] + "…"
}

func firstLine(s string) string {
	if i := strings.IndexByte(s, '\n'); i >= 0 {
		return s[:i]
	}
	return s
}

// ParseDirName reads key=value parts of a directory name, separated by
// commas or semicolons ("lr=0.01,bs=64"). Parts without "=" are not
// parameters ("run-3" in "run-3,lr=0.1"). Keys and values are made
// printable.
func ParseDirName(name string) sweep.Params {
	var out sweep.Params
	for _, part := range strings.FieldsFunc(name, func(r rune) bool { return r == ',' || r == ';' }) {
		k, v, ok := strings.Cut(part, "=")
		k = strings.TrimSpace(cut(diagnose.Printable(k), maxValueBytes))
		v = strings.TrimSpace(cut(diagnose.Printable(v), maxValueBytes))
		if !ok || k == "" {
			continue
		}
		out = append(out, sweep.Param{Key: k, Value: v, From: "directory name"})
	}
	return sweep.Sorted(out)
}

// asMap returns v as a mapping with string keys: JSON objects, and YAML
// mappings whose keys may be numbers or booleans (written as text).
func asMap(v any) (map[string]any, bool) {
	switch m := v.(type) {
	case map[string]any:
		return m, true
	case map[any]any:
		out := make(map[string]any, len(m))
		for k, x := range m {
			out[fmt.Sprint(k)] = x
		}
		return out, true
	}
	return nil, false
}
