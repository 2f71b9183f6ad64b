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
	"path/filepath"
	"runtime/debug"

	"capbank/components/export"
	"capbank/sizing"
	"capbank/web/store"
	"capbank/web/store/sqlite"
)

// stdin is where the design comes from when the design file is "-"; tests
// replace it.
var stdin io.Reader = os.Stdin

const sizeUsage = `usage: capbank size [--format json|text] [--data DIR] [--profile LOG.csv] [-o FILE] DESIGN.json
       capbank size --format boq-csv|boq-json [--cell ID] [-o FILE] DESIGN.json
       capbank size --format boq-xlsx|pdf [--cell ID] [--paper a4|letter] -o FILE DESIGN.json

Sizes a supercapacitor bank for every candidate cell in the design file
DESIGN.json ("-" reads standard input) and prints the report (json, text)
or exports the bank: its bill of quantities (boq-csv, boq-xlsx, boq-json)
or the design report (pdf). The exports are for the recommended cell, or
the feasible cell --cell names. boq-xlsx and pdf are binary and need -o
(-o - writes them to standard output on purpose). An invalid design prints
one line per problem on stderr, each naming its field, and exits with
status 2.

The load profile is the design's steps, or a logged profile: a CSV file
with a header naming time_s and power_w or current_a, named in the design
as "load": {"profile_csv": "day.csv"} (a path relative to the design
file's folder), or given with --profile (in place of the design's steps
or profile; its efficiency and repeat stay).

A cell may be given in full or named by its library id ("cells":
["demo-2v7-650f", "my-cell"]): ids resolve in the cell library of the
data directory (--data, as capbank serve keeps it), or, where there is no
database yet, in the built-in demo cells.

flags:
`

func runSize(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	flags := flag.NewFlagSet("capbank size", flag.ContinueOnError)
	flags.SetOutput(stderr)
	format := flags.String("format", "json", "what to write, `FORMAT`: json (the full report), text (a table for a terminal), boq-csv, boq-xlsx, boq-json (the bill of quantities) or pdf (the design report)")
	out := flags.String("o", "", "write to `FILE` instead of standard output (required for boq-xlsx and pdf)")
	cellID := flags.String("cell", "", "export the bank of cell `ID` instead of the recommended one (boq-* and pdf)")
	paper := flags.String("paper", "a4", "`SIZE` of the pdf's pages: a4 or letter")
	profile := flags.String("profile", "", "size with the logged load profile in the CSV `FILE` (time_s and power_w or current_a) in place of the design's steps")
	data := flags.String("data", "capbank-data", "the data `DIR`ectory whose cell library resolves cells named by id; without a database there, the built-in demo cells")
	cl, err := parseCommand(flags, args, sizeUsage)
	if err != nil {
		return err
	}
	pos, set, usage := cl.pos, cl.set, cl.usage
	exp, isExport := export.LookupFormat(*format)
	if *format != "json" && *format != "text" && !isExport {
		return usageFailure(stderr, usage, "capbank size: --format must be json, text, boq-csv, boq-xlsx, boq-json or pdf (got %q)", *format)
	}
	if set["cell"] && !isExport {
		return usageFailure(stderr, usage, "capbank size: --cell chooses the bank of an export (boq-csv, boq-xlsx, boq-json, pdf); the %s report has every candidate", *format)
	}
	if set["cell"] && *cellID == "" {
		return usageFailure(stderr, usage, "capbank size: --cell needs a cell id from the design")
	}
	pdfPaper, err := export.ParsePaper(*paper)
	if err != nil {
		return usageFailure(stderr, usage, "capbank size: --%s", err)
	}
	if set["paper"] && *format != "pdf" {
		return usageFailure(stderr, usage, "capbank size: --paper applies to --format pdf only")
	}
	if isExport && exp.Binary && *out == "" {
		return usageFailure(stderr, usage, "capbank size: --format %s writes a binary file: give -o FILE (or -o - for standard output)", *format)
	}
	switch len(pos) {
	case 0:
		return usageFailure(stderr, usage, "capbank size: give the design file (or - for standard input)")
	case 1:
	default:
		return usageFailure(stderr, usage, "capbank size: give one design file, not %d", len(pos))
	}

	lookup, closeLib, err := openLibrary(ctx, *data, set["data"])
	if err != nil {
		return err
	}
	defer closeLib()
	if set["profile"] && *profile == "" {
		return usageFailure(stderr, usage, "capbank size: --profile needs a CSV file")
	}
	d, rep, err := sizeFile(ctx, pos[0], *profile, lookup)
	if err != nil {
		return err
	}
	var buf bytes.Buffer
	switch {
	case *format == "text":
		writeText(&buf, rep)
	case *format == "json":
		if err := writeJSON(&buf, rep); err != nil {
			return err
		}
	default:
		boq, err := chooseBOQ(d, rep, *cellID, exp, stderr)
		if err != nil {
			return err
		}
		if err := writeExport(&buf, exp, d, rep, boq, export.PDFOptions{Paper: pdfPaper, Date: today()}); err != nil {
			return err
		}
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

// parsed is a subcommand's command line once its flags are read.
type parsed struct {
	pos   []string        // the arguments that are not flags, in order
	set   map[string]bool // the flags given
	usage func(io.Writer) // writes the usage text and the flags
}

// parseCommand reads a subcommand's flags wherever they stand in args
// (parseInterspersed), with usageText before the flags' defaults as its
// usage. A help request is flag.ErrHelp; a flag mistake a usageError, the
// flag package having printed it and the usage.
func parseCommand(flags *flag.FlagSet, args []string, usageText string) (parsed, error) {
	p := parsed{set: map[string]bool{}}
	p.usage = func(w io.Writer) {
		fmt.Fprint(w, usageText)
		flags.PrintDefaults()
	}
	flags.Usage = func() { p.usage(flags.Output()) }
	pos, err := parseInterspersed(flags, args)
	if errors.Is(err, flag.ErrHelp) {
		return p, err
	}
	if err != nil {
		return p, usageError{err.Error()}
	}
	p.pos = pos
	flags.Visit(func(f *flag.Flag) { p.set[f.Name] = true })
	return p, nil
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
// stdin), with the logged profile in the file profile in place of its load
// steps when profile is not "". It gives up when ctx is done, so an interrupt ends a command left
// waiting on a terminal's standard input or on a long sizing.
func sizeFile(ctx context.Context, name, profile string, lookup func(string) (sizing.Cell, bool)) (*sizing.Design, *sizing.Report, error) {
	type outcome struct {
		d   *sizing.Design
		rep *sizing.Report
		err error
	}
	done := make(chan outcome, 1)
	in := stdin // read here: the goroutine may outlive this call
	go func() {
		d, rep, err := readAndSize(name, profile, in, lookup)
		done <- outcome{d, rep, err}
	}()
	select {
	case <-ctx.Done():
		return nil, nil, fmt.Errorf("interrupted before the sizing finished (%w)", context.Cause(ctx))
	case o := <-done:
		return o.d, o.rep, o.err
	}
}

// readAndSize reads and sizes the design in the named file, or in stdin
// for "-", with the logged profile of the file profile when it is not "";
// lookup resolves the cells the design names by id.
func readAndSize(name, profile string, stdin io.Reader, lookup func(string) (sizing.Cell, bool)) (d *sizing.Design, rep *sizing.Report, err error) {
	defer func() {
		if p := recover(); p != nil {
			d, rep, err = nil, nil, &internalError{value: p, stack: debug.Stack()}
		}
	}()
	d, err = readDesign(name, profile, stdin, lookup)
	if err != nil {
		return nil, nil, err
	}
	rep, err = sizing.Size(d)
	if profile != "" {
		err = flagField(err)
	}
	return d, rep, err
}

// readDesign reads the design in the named file, or in stdin for "-",
// with the logged profile of the file profile when it is not "", and
// resolves the cells it names by id with lookup: the one intake of a
// design file on the command line.
func readDesign(name, profile string, stdin io.Reader, lookup func(string) (sizing.Cell, bool)) (*sizing.Design, error) {
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
	if err := attachProfile(&d.Load, name, profile); err != nil {
		return nil, err
	}
	d.ResolveCells(lookup)
	return d, nil
}

// attachProfile reads the logged profile the design's load names
// (load.profile_csv, a path relative to the design file's folder, or to
// the working folder for a design on standard input) or, when flagPath is
// not "", the file --profile names, which replaces the design's steps or
// profile. sizing reads the text; a file that cannot be read is a problem
// of its field.
func attachProfile(l *sizing.Load, designName, flagPath string) error {
	field, path := "load.profile_csv", l.ProfileCSV
	if flagPath != "" {
		field, path = "--profile", flagPath
		l.Steps, l.ProfileCSVText, l.ProfileCSV = nil, "", flagPath
	} else if path == "" || l.ProfileCSVText != "" || len(l.Steps) > 0 {
		return nil // no file, or one given with steps or text: Validate refuses it by field
	} else if designName != "-" && !filepath.IsAbs(path) {
		path = filepath.Join(filepath.Dir(designName), path)
	}
	data, err := readProfileFile(path)
	if err != nil {
		return sizing.ValidationError{{Field: field, Rule: "read", Message: fmt.Sprintf("cannot read the profile file %q: %v", path, err)}}
	}
	l.AttachProfileFile(string(data))
	return nil
}

// readProfileFile reads a logged profile file, refusing a folder and a
// file larger than sizing reads (ProfileCSVMaxRows rows of up to 64 bytes).
func readProfileFile(path string) ([]byte, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, pathReason(err)
	}
	defer f.Close()
	if st, err := f.Stat(); err == nil && st.IsDir() {
		return nil, errors.New("it is a directory")
	}
	const most = sizing.ProfileCSVMaxRows * 64
	data, err := io.ReadAll(io.LimitReader(f, most+1))
	if err != nil {
		return nil, pathReason(err)
	}
	if len(data) > most {
		return nil, fmt.Errorf("it is larger than %d MB, more than %d rows of a logged profile; resample the log", most/1_000_000, sizing.ProfileCSVMaxRows)
	}
	return data, nil
}

// flagField names --profile in the problems of a profile --profile gave.
func flagField(err error) error {
	var ve sizing.ValidationError
	if !errors.As(err, &ve) {
		return err
	}
	for i := range ve {
		if ve[i].Field == "load.profile_csv" {
			ve[i].Field = "--profile"
		}
	}
	return ve
}

// openLibrary is the cell library a design file's cell ids resolve in:
// the database in dataDir when there is one, else the built-in demo cells.
// explicit is true when the user named the directory: then a missing
// database is an error rather than a quiet fall-back.
func openLibrary(ctx context.Context, dataDir string, explicit bool) (func(string) (sizing.Cell, bool), func(), error) {
	path := filepath.Join(dataDir, store.FileName)
	if _, err := os.Stat(path); err != nil {
		if explicit {
			return nil, nil, fmt.Errorf("--data %s: there is no capbank database (%s) there; start capbank serve --data %s once to create it, or leave --data out to use the demo cells", dataDir, store.FileName, dataDir)
		}
		return store.DemoCell, func() {}, nil
	}
	st, err := sqlite.Open(ctx, path)
	if err != nil {
		return nil, nil, fmt.Errorf("--data %s: %w", dataDir, err)
	}
	return st.Lookup(ctx), func() { st.Close() }, nil
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
