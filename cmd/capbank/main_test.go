package main

import (
	"bytes"
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"capbank/sizing"
)

// runCapbank runs capbank with args and returns its exit status, stdout and
// stderr.
func runCapbank(t *testing.T, ctx context.Context, args ...string) (int, string, string) {
	t.Helper()
	var stdout, stderr bytes.Buffer
	err := run(ctx, args, &stdout, &stderr)
	return exitStatus(err), stdout.String(), stderr.String()
}

// writeFile writes content to name in a fresh temporary directory and
// returns its path.
func writeFile(t *testing.T, name, content string) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(path, []byte(content), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// validDesign is a design that passes validation; cases below break one or
// two of its values.
const validDesign = `{
  "name": "cli test",
  "window": {"max_v": 20, "min_v": 10},
  "load": {"steps": [
    {"power_w": 100, "duration_s": 1},
    {"rest": true, "duration_s": 2},
    {"current_a": 3, "duration_s": 4}
  ]},
  "cells": [{"id": "a", "rated_v": 2.7, "capacitance_f": 100, "esr_ohm": 0.01}]
}`

func TestRunInvalidDesign(t *testing.T) {
	t.Parallel()
	// The field paths are the design-file paths sizing.Validate and
	// sizing.DecodeDesign document for each broken value.
	tests := []struct {
		name   string
		design string
		fields []string
	}{
		{
			name: "window upside down and a zero duration",
			design: strings.NewReplacer(`"min_v": 10`, `"min_v": 21`,
				`{"current_a": 3, "duration_s": 4}`, `{"current_a": 3, "duration_s": 0}`).Replace(validDesign),
			fields: []string{"load.steps[2].duration_s", "window.min_v"},
		},
		{
			name:   "step with two kinds",
			design: strings.Replace(validDesign, `{"rest": true, "duration_s": 2}`, `{"rest": true, "power_w": 5, "duration_s": 2}`, 1),
			fields: []string{"load.steps[1]"},
		},
		{
			name:   "no cells",
			design: strings.Replace(validDesign, `[{"id": "a", "rated_v": 2.7, "capacitance_f": 100, "esr_ohm": 0.01}]`, `[]`, 1),
			fields: []string{"cells"},
		},
		{
			name:   "number given as a string",
			design: strings.Replace(validDesign, `"max_v": 20`, `"max_v": "20"`, 1),
			fields: []string{"window.max_v"},
		},
		{
			name:   "unknown key",
			design: strings.Replace(validDesign, `"name": "cli test",`, `"name": "cli test", "colour": "blue",`, 1),
			fields: []string{"colour"},
		},
		{
			name:   "truncated file",
			design: validDesign[:40],
			fields: []string{"design"},
		},
		{
			name:   "empty file",
			design: "",
			fields: []string{"design"},
		},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			path := writeFile(t, "design.json", tt.design)
			for _, format := range []string{"json", "text"} {
				status, stdout, stderr := runCapbank(t, context.Background(), "size", "--format", format, path)
				if status != 2 {
					t.Errorf("--format %s: exit status %d, want 2 (invalid design); stderr:\n%s", format, status, stderr)
				}
				if stdout != "" {
					t.Errorf("--format %s: stdout %q, want nothing", format, stdout)
				}
				lines := strings.Split(strings.TrimSuffix(stderr, "\n"), "\n")
				var fields []string
				for _, line := range lines {
					field, msg, ok := strings.Cut(line, ": ")
					if !ok || msg == "" {
						t.Errorf("--format %s: stderr line %q is not FIELD: MESSAGE", format, line)
					}
					fields = append(fields, field)
				}
				if got, want := strings.Join(fields, ","), strings.Join(tt.fields, ","); got != want {
					t.Errorf("--format %s: fields on stderr %s, want %s; stderr:\n%s", format, got, want, stderr)
				}
				// Each line is the problem exactly as sizing renders it.
				if want := sizingProblems(t, tt.design); stderr != want {
					t.Errorf("--format %s: stderr\n%s\nwant sizing's own lines\n%s", format, stderr, want)
				}
			}
		})
	}
}

// sizingProblems is what sizing says about design: one line per
// FieldError, as FieldError.Error renders it.
func sizingProblems(t *testing.T, design string) string {
	t.Helper()
	d, err := sizing.DecodeDesign(strings.NewReader(design))
	if err == nil {
		err = sizing.Validate(d)
	}
	var ve sizing.ValidationError
	if !errors.As(err, &ve) {
		t.Fatalf("sizing finds no problem with the test design (err %v)", err)
	}
	var b strings.Builder
	for _, fe := range ve {
		fmt.Fprintln(&b, fe.Error())
	}
	return b.String()
}

func TestRunInvalidDesignWritesNoOutputFile(t *testing.T) {
	t.Parallel()
	path := writeFile(t, "design.json", strings.Replace(validDesign, `"esr_ohm": 0.01`, `"esr_ohm": -1`, 1))
	out := filepath.Join(t.TempDir(), "report.json")
	status, stdout, stderr := runCapbank(t, context.Background(), "size", "-o", out, path)
	if status != 2 || stdout != "" {
		t.Errorf("exit status %d, stdout %q; want 2 and nothing", status, stdout)
	}
	// The message is sizing's rendering of the gt=0 tag on esr_ohm.
	if want := "cells[0].esr_ohm: must be greater than 0\n"; stderr != want {
		t.Errorf("stderr %q, want %q", stderr, want)
	}
	if _, err := os.Stat(out); !errors.Is(err, os.ErrNotExist) {
		t.Errorf("report file %s exists after an invalid design (stat: %v)", out, err)
	}
}

// Not parallel: replaces the package's stdin.
func TestRunInvalidDesignFromStdin(t *testing.T) {
	design := strings.Replace(validDesign, `"capacitance_f": 100`, `"capacitance_f": 0`, 1)
	defer func(r io.Reader) { stdin = r }(stdin)
	stdin = strings.NewReader(design)
	status, stdout, stderr := runCapbank(t, context.Background(), "size", "-")
	if status != 2 || stdout != "" {
		t.Errorf("exit status %d, stdout %q; want 2 and nothing", status, stdout)
	}
	// The message is sizing's rendering of the gt=0 tag on capacitance_f.
	if want := "cells[0].capacitance_f: must be greater than 0\n"; stderr != want {
		t.Errorf("stderr %q, want %q", stderr, want)
	}
}

func TestRunUnreadableDesign(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	missing := filepath.Join(dir, "no-such-design.json")
	tests := []struct {
		name string
		arg  string
		want string
	}{
		{"missing file", missing, `capbank: cannot read the design file "` + missing + `": no such file or directory`},
		{"directory", dir, `capbank: cannot read the design file "` + dir + `": it is a directory`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			status, stdout, stderr := runCapbank(t, context.Background(), "size", tt.arg)
			if status != 1 {
				t.Errorf("exit status %d, want 1", status)
			}
			if stdout != "" {
				t.Errorf("stdout %q, want nothing", stdout)
			}
			if stderr != tt.want+"\n" {
				t.Errorf("stderr %q, want %q", stderr, tt.want+"\n")
			}
		})
	}
}

func TestRunCommandLine(t *testing.T) {
	t.Parallel()
	design := writeFile(t, "design.json", validDesign)
	const sizeUsageLine = "usage: capbank size [--format json|text] [--data DIR] [--profile LOG.csv] [-o FILE] DESIGN.json"
	const topUsageLine = "usage: capbank <command> [arguments]"
	tests := []struct {
		name   string
		args   []string
		status int
		want   []string // lines stderr must contain
	}{
		{"unknown command", []string{"sise", design}, 2, []string{`capbank: unknown command "sise"`, topUsageLine}},
		{"flag before the command", []string{"--format", "text", "size", design}, 2, []string{"flags follow the command", topUsageLine}},
		{"help", []string{"-h"}, 0, []string{topUsageLine}},
		{"unknown flag", []string{"size", "--colour", "red", design}, 2, []string{"flag provided but not defined: -colour", sizeUsageLine}},
		{"unknown flag after the file", []string{"size", design, "-v"}, 2, []string{"flag provided but not defined: -v", sizeUsageLine}},
		{"flag without its value", []string{"size", design, "-o"}, 2, []string{"flag needs an argument: -o", sizeUsageLine}},
		{"bad format", []string{"size", "--format", "xml", design}, 2, []string{`capbank size: --format must be json, text, boq-csv, boq-xlsx, boq-json or pdf (got "xml")`, sizeUsageLine}},
		{"no design file", []string{"size", "--format", "text"}, 2, []string{"capbank size: give the design file (or - for standard input)", sizeUsageLine}},
		{"two design files", []string{"size", design, design}, 2, []string{"capbank size: give one design file, not 2", sizeUsageLine}},
		{"size help", []string{"size", "-h"}, 0, []string{sizeUsageLine, "-format", "-o FILE"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			status, stdout, stderr := runCapbank(t, context.Background(), tt.args...)
			if status != tt.status {
				t.Errorf("exit status %d, want %d; stderr:\n%s", status, tt.status, stderr)
			}
			if stdout != "" {
				t.Errorf("stdout %q, want nothing (usage goes to stderr)", stdout)
			}
			for _, w := range tt.want {
				if !strings.Contains(stderr, w) {
					t.Errorf("stderr does not contain %q:\n%s", w, stderr)
				}
			}
		})
	}
}

func TestParseInterspersed(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name   string
		args   []string
		format string
		pos    []string
	}{
		{"flags first", []string{"--format", "text", "d.json"}, "text", []string{"d.json"}},
		{"flags last", []string{"d.json", "--format=text"}, "text", []string{"d.json"}},
		{"stdin between flags", []string{"-format", "text", "-", "-o", "r.txt"}, "text", []string{"-"}},
		{"double dash ends flags", []string{"--", "d.json", "--format", "text"}, "json", []string{"d.json", "--format", "text"}},
		{"no arguments", nil, "json", nil},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			flags := flag.NewFlagSet("test", flag.ContinueOnError)
			flags.SetOutput(io.Discard)
			format := flags.String("format", "json", "")
			flags.String("o", "", "")
			pos, err := parseInterspersed(flags, tt.args)
			if err != nil {
				t.Fatal(err)
			}
			if *format != tt.format || strings.Join(pos, " ") != strings.Join(tt.pos, " ") || len(pos) != len(tt.pos) {
				t.Errorf("format %q, arguments %q; want %q, %q", *format, pos, tt.format, tt.pos)
			}
		})
	}
}

// Not parallel: replaces the package's stdin.
func TestRunInterruptedWhileReadingStdin(t *testing.T) {
	r, w := io.Pipe() // nothing is ever written: the read blocks as on an idle terminal
	defer func(old io.Reader) { stdin = old }(stdin)
	stdin = r
	t.Cleanup(func() { w.Close() })
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	status, stdout, stderr := runCapbank(t, ctx, "size", "-")
	if status != 1 {
		t.Errorf("exit status %d, want 1", status)
	}
	if stdout != "" {
		t.Errorf("stdout %q, want nothing", stdout)
	}
	if want := "capbank: interrupted before the sizing finished (context canceled)\n"; stderr != want {
		t.Errorf("stderr %q, want %q", stderr, want)
	}
}

func TestExitStatus(t *testing.T) {
	t.Parallel()
	// The exit statuses capbank documents in its usage and README.
	tests := []struct {
		name string
		err  error
		want int
	}{
		{"success", nil, 0},
		{"help", flag.ErrHelp, 0},
		{"usage mistake", usageError{"capbank: unknown command"}, 2},
		{"invalid design", sizing.ValidationError{{Field: "window.max_v", Rule: "gt", Message: "must be greater than 0"}}, 2},
		{"wrapped invalid design", fmt.Errorf("size: %w", sizing.ValidationError{{Field: "cells", Rule: "min", Message: "x"}}), 2},
		{"unreadable file", fmt.Errorf("cannot read the design file: %w", os.ErrNotExist), 1},
		{"internal error", &internalError{value: "boom"}, 1},
		{"interrupted", context.Canceled, 1},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			t.Parallel()
			if got := exitStatus(tt.err); got != tt.want {
				t.Errorf("exitStatus(%v) = %d, want %d", tt.err, got, tt.want)
			}
		})
	}
}

func TestReportInternalError(t *testing.T) {
	t.Parallel()
	var stderr bytes.Buffer
	report(&stderr, &internalError{value: "sizing: index out of range", stack: []byte("goroutine 1 [running]:\n")})
	want := "capbank: internal error (a bug in capbank; please report it with the design file): sizing: index out of range\n" +
		"goroutine 1 [running]:\n"
	if stderr.String() != want {
		t.Errorf("stderr %q, want %q", stderr.String(), want)
	}
}
