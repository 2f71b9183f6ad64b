// Command capbank sizes supercapacitor (EDLC) banks.
//
//	capbank size [--format json|text] [-o FILE] DESIGN.json
//	capbank size --format boq-csv|boq-xlsx|boq-json|pdf [--cell ID] [--paper a4|letter] -o FILE DESIGN.json
//	capbank explore [--format json|csv|text] DESIGN.json
//
// reads a design file (or standard input for "-"), sizes every candidate
// cell and prints the report, or exports the bank's bill of quantities or
// the PDF design report. Exit status: 0 on success, 2 for a mistake in
// the command line or an invalid design (one line per problem on stderr,
// each naming its field), 1 for any other failure.
package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"syscall"

	"capbank/sizing"
	"capbank/web/fault"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	err := run(ctx, os.Args[1:], os.Stdout, os.Stderr)
	stop()
	os.Exit(exitStatus(err))
}

// command is one subcommand of capbank.
type command struct {
	name    string
	summary string
	run     func(ctx context.Context, args []string, stdout, stderr io.Writer) error
}

var commands = []command{
	{"size", "size a bank from a design file and print the report", runSize},
	{"explore", "size every cell at several series counts and mark the front", runExplore},
	{"serve", "start the web server (the default)", runServe},
	{"measure", "characterise a cell from test data (capacitance, ESR, leakage)", runMeasure},
	{"loadtest", "drive a running server and print its throughput and latency", runLoadtest},
	{"migrate", "apply the database migrations without serving", runMigrate},
	{"export-library", "write every cell and saved design to one JSON file", runExportLibrary},
	{"import-library", "read a library file into a new database", runImportLibrary},
}

// run is capbank without the process around it: it parses args (without the
// program name), runs the subcommand and reports any error on stderr before
// returning it; exitStatus turns the error into the exit status.
func run(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	err := dispatch(ctx, args, stdout, stderr)
	if err != nil {
		report(stderr, err)
	}
	return err
}

func dispatch(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	if len(args) == 0 || isServeFlag(args[0]) {
		return runDefault(ctx, args, stdout, stderr)
	}
	switch name := args[0]; name {
	case "-h", "-help", "--help", "help":
		printUsage(stderr)
		return flag.ErrHelp
	default:
		for _, c := range commands {
			if c.name == name {
				return c.run(ctx, args[1:], stdout, stderr)
			}
		}
		if len(name) > 1 && name[0] == '-' {
			return usageFailure(stderr, printUsage, "capbank: flags follow the command, as in capbank size --format text DESIGN.json (got %s first)", name)
		}
		return usageFailure(stderr, printUsage, "capbank: unknown command %q", name)
	}
}

// runDefault is what capbank does with no subcommand: capbank serve, with
// the serve flags given (capbank --addr 127.0.0.1:8099).
func runDefault(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	if len(args) == 0 {
		args = defaultServeArgs
	}
	return runServe(ctx, args, stdout, stderr)
}

func printUsage(w io.Writer) {
	fmt.Fprintln(w, "usage: capbank <command> [arguments]")
	fmt.Fprintln(w)
	fmt.Fprintln(w, "commands:")
	for _, c := range commands {
		fmt.Fprintf(w, "  %-8s  %s\n", c.name, c.summary)
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, `Run "capbank <command> -h" for a command's flags.`)
	fmt.Fprintln(w, "Exit status: 0 success, 2 invalid command line or design, 1 other failure.")
}

// usageError is a mistake in the command line. Its message and the usage
// have already been written to stderr where it arose.
type usageError struct{ msg string }

func (e usageError) Error() string { return e.msg }

// usageFailure writes the message and the usage to stderr and returns the
// usageError for it.
func usageFailure(stderr io.Writer, usage func(io.Writer), format string, a ...any) error {
	msg := fmt.Sprintf(format, a...)
	fmt.Fprintln(stderr, msg)
	usage(stderr)
	return usageError{msg}
}

// internalError is a panic in capbank itself, turned into an error so the
// user gets a message, the stack for the bug report and status 1.
type internalError struct {
	value any
	stack []byte
}

func (e *internalError) Error() string {
	return fmt.Sprintf("internal error (a bug in capbank; please report it with the design file): %v", e.value)
}

// report writes err to stderr the way the user should see it. Usage errors
// and help have been written already.
func report(stderr io.Writer, err error) {
	var ve sizing.ValidationError
	var ue usageError
	var ie *internalError
	switch {
	case errors.Is(err, flag.ErrHelp), errors.As(err, &ue):
	case errors.As(err, &ve):
		for _, fe := range ve {
			fmt.Fprintln(stderr, fe.Error())
		}
	case errors.As(err, &ie):
		fmt.Fprintln(stderr, "capbank: "+err.Error())
		stderr.Write(ie.stack)
	default:
		fmt.Fprintln(stderr, "capbank: "+err.Error())
	}
}

// exitStatus is the one place that maps an error from run to the exit
// status: 0 for none or a help request; otherwise the exit status of its
// code in the one error table (capbank/web/fault), which the web's HTTP
// statuses come from too: 2 for a usage mistake or an invalid design, 1
// for anything else.
func exitStatus(err error) int {
	if err == nil || errors.Is(err, flag.ErrHelp) {
		return 0
	}
	return fault.ExitStatus(codeOf(err))
}

// codeOf is the fault code of an error from run.
func codeOf(err error) fault.Code {
	var ve sizing.ValidationError
	var ue usageError
	switch fe := fault.As(err); {
	case fe != nil:
		return fe.Code
	case errors.As(err, &ue):
		return fault.Malformed
	case errors.As(err, &ve):
		return fault.Invalid
	}
	return fault.Internal
}
