package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"io/fs"
	"os"
	"runtime/debug"

	"capbank/sizing"
)

// stdin is where the design comes from when the design file is "-"; tests
// replace it.
var stdin io.Reader = os.Stdin

const sizeUsage = `usage: capbank size [--format json|text] [-o FILE] DESIGN.json

Sizes a supercapacitor bank for every candidate cell in the design file
DESIGN.json ("-" reads standard input) and prints the report. An invalid
design prints one line per problem on stderr, each naming its field, and
exits with status 2.

flags:
`

func runSize(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	flags := flag.NewFlagSet("capbank size", flag.ContinueOnError)
	flags.SetOutput(stderr)
	format := flags.String("format", "json", "report format: json (the full report) or text (a table for a terminal)")
	out := flags.String("o", "", "write the report to `FILE` instead of standard output")
	usage := func(w io.Writer) {
		fmt.Fprint(w, sizeUsage)
		flags.PrintDefaults()
	}
	flags.Usage = func() { usage(flags.Output()) }

	pos, err := parseInterspersed(flags, args)
	if errors.Is(err, flag.ErrHelp) {
		return err
	}
	if err != nil {
		return usageError{err.Error()} // the flag package has printed it and the usage
	}
	if *format != "json" && *format != "text" {
		return usageFailure(stderr, usage, "capbank size: --format must be json or text (got %q)", *format)
	}
	switch len(pos) {
	case 0:
		return usageFailure(stderr, usage, "capbank size: give the design file (or - for standard input)")
	case 1:
	default:
		return usageFailure(stderr, usage, "capbank size: give one design file, not %d", len(pos))
	}

	rep, err := sizeFile(ctx, pos[0])
	if err != nil {
		return err
	}
	var buf bytes.Buffer
	if *format == "text" {
		writeText(&buf, rep)
	} else if err := writeJSON(&buf, rep); err != nil {
		return err
	}
	if *out == "" || *out == "-" {
		_, err = stdout.Write(buf.Bytes())
		return err
	}
	if err := os.WriteFile(*out, buf.Bytes(), 0o644); err != nil {
		return fmt.Errorf("cannot write the report: %w", err)
	}
	return nil
}

// parseInterspersed parses the flags in args wherever they stand, so that
// "capbank size design.json --format text" works as well as the flags-first
// form, and returns the other arguments in order. Everything after "--" is
// an argument.
func parseInterspersed(flags *flag.FlagSet, args []string) ([]string, error) {
	var pos []string
	for {
		if err := flags.Parse(args); err != nil {
			return nil, err
		}
		rest := flags.Args()
		if len(rest) == 0 {
			return pos, nil
		}
		if used := len(args) - len(rest); used > 0 && args[used-1] == "--" {
			return append(pos, rest...), nil
		}
		pos = append(pos, rest[0])
		args = rest[1:]
	}
}

// sizeFile reads, decodes and sizes the design in the named file ("-" for
// stdin). It gives up when ctx is done, so an interrupt ends a command left
// waiting on a terminal's standard input or on a long sizing.
func sizeFile(ctx context.Context, name string) (*sizing.Report, error) {
	type outcome struct {
		rep *sizing.Report
		err error
	}
	done := make(chan outcome, 1)
	in := stdin // read here: the goroutine may outlive this call
	go func() {
		rep, err := readAndSize(name, in)
		done <- outcome{rep, err}
	}()
	select {
	case <-ctx.Done():
		return nil, fmt.Errorf("interrupted before the sizing finished (%w)", context.Cause(ctx))
	case o := <-done:
		return o.rep, o.err
	}
}

// readAndSize sizes the design in the named file, or in stdin for "-".
func readAndSize(name string, stdin io.Reader) (rep *sizing.Report, err error) {
	r := stdin
	if name != "-" {
		f, err := os.Open(name)
		if err != nil {
			return nil, fmt.Errorf("cannot read the design file %q: %w", name, pathReason(err))
		}
		defer f.Close()
		if st, err := f.Stat(); err == nil && st.IsDir() {
			return nil, fmt.Errorf("cannot read the design file %q: it is a directory", name)
		}
		r = f
	}
	d, err := sizing.DecodeDesign(r)
	if err != nil {
		return nil, err
	}
	defer func() {
		if p := recover(); p != nil {
			rep, err = nil, &internalError{value: p, stack: debug.Stack()}
		}
	}()
	return sizing.Size(d)
}

// pathReason drops the operation and path from a *fs.PathError, which the
// message around it already names.
func pathReason(err error) error {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// writeJSON writes the report as JSON indented by two spaces, with a
// trailing newline. Messages keep <, > and & as they are.
func writeJSON(w io.Writer, rep *sizing.Report) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	if err := enc.Encode(rep); err != nil {
		return fmt.Errorf("cannot encode the report as JSON: %w", err)
	}
	return nil
}
