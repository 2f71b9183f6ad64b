package sizing

import (
	"bytes"
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"testing/iotest"
)

// All logs in these tests and in testdata/profiles are invented demo data.

// profileDurationTol, in s, absorbs the rounding of differences of decimal
// times such as 1.8 − 1.3; it is far below any sample interval used here.
const profileDurationTol = 1e-9

// wantProfileStep is an expected step: a value (0 for rest) held for
// durationS.
type wantProfileStep struct {
	value     float64
	rest      bool
	durationS float64
}

func checkProfileSteps(t *testing.T, got []Step, column string, want []wantProfileStep) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("got %d steps %s, want %d", len(got), describeProfileSteps(got), len(want))
	}
	for i, w := range want {
		g := got[i]
		if g.ResistanceOhm != nil {
			t.Errorf("step %d: ResistanceOhm set, a CSV profile never sets it", i)
		}
		value, other := g.PowerW, g.CurrentA
		if column == profileCurrentColumn {
			value, other = g.CurrentA, g.PowerW
		}
		if other != nil {
			t.Errorf("step %d: has a value in the column not read", i)
		}
		switch {
		case w.rest && (!g.Rest || value != nil):
			t.Errorf("step %d: got Rest=%v value=%v, want a rest step", i, g.Rest, value)
		case !w.rest && (g.Rest || value == nil):
			t.Errorf("step %d: got Rest=%v value=%v, want %s %g", i, g.Rest, value, column, w.value)
		case !w.rest && *value != w.value:
			t.Errorf("step %d: %s = %g, want %g", i, column, *value, w.value)
		}
		if math.Abs(g.DurationS-w.durationS) > profileDurationTol {
			t.Errorf("step %d: DurationS = %.12g, want %g ± %g", i, g.DurationS, w.durationS, profileDurationTol)
		}
	}
}

func describeProfileSteps(steps []Step) string {
	var b strings.Builder
	for _, s := range steps {
		switch {
		case s.Rest:
			b.WriteString("[rest")
		case s.PowerW != nil:
			b.WriteString("[" + strconv.FormatFloat(*s.PowerW, 'g', -1, 64) + " W")
		case s.CurrentA != nil:
			b.WriteString("[" + strconv.FormatFloat(*s.CurrentA, 'g', -1, 64) + " A")
		}
		b.WriteString(" for " + strconv.FormatFloat(s.DurationS, 'g', -1, 64) + " s]")
	}
	return b.String()
}

func TestParseProfileCSVSteps(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name      string
		in        string
		column    string
		rows      int
		startS    float64
		durationS float64
		steps     []wantProfileStep
	}{
		{
			// Hand worked: rows at 0 and 1 s share 100 W, so they merge and
			// hold until the 50 W row at 3 s (1 + 2 = 3 s); 50 W holds 3→4 s;
			// the zeros at 4 and 6 s merge into one rest 4→7 s; the last row
			// (−20 W, charging) holds for the interval before it, 7 − 6 = 1 s.
			// Total 3 + 1 + 3 + 1 = 8 s.
			name:      "zero-order hold and merging",
			in:        "time_s,power_w\n0,100\n1,100\n3,50\n4,0\n6,0\n7,-20\n",
			column:    "power_w",
			rows:      6,
			startS:    0,
			durationS: 8,
			steps:     []wantProfileStep{{100, false, 3}, {50, false, 1}, {0, true, 3}, {-20, false, 1}},
		},
		{
			// Hand worked: two rows 2 s apart, same value: one step of 2 s
			// plus the last row held for the 2 s before it = 4 s.
			name:      "two rows are enough",
			in:        "time_s,power_w\n10,5\n12,5\n",
			column:    "power_w",
			rows:      2,
			startS:    10,
			durationS: 4,
			steps:     []wantProfileStep{{5, false, 4}},
		},
		{
			// Hand worked: 2 A over −2→0 s (2 s), 0 A rest over 0→0.5 s, the
			// last row (−1 A) held 0.5 s. StartS is the first time even when
			// negative (a log timed from a trigger).
			name:      "current column and negative times",
			in:        "time_s,current_a\n-2,2\n0,0\n0.5,-1\n",
			column:    "current_a",
			rows:      3,
			startS:    -2,
			durationS: 3,
			steps:     []wantProfileStep{{2, false, 2}, {0, true, 0.5}, {-1, false, 0.5}},
		},
		{
			// Hand worked: a log as a spreadsheet writes it, UTF-8 BOM
			// (EF BB BF) and CRLF line ends (RFC 4180 §2 rule 1 uses CRLF).
			// 100 W over 0→3 s; the last row (50 W) held for the 3 − 1 = 2 s
			// before it. Total 5 s.
			name:      "BOM and CRLF",
			in:        "\ufefftime_s,power_w\r\n0,100\r\n1,100\r\n3,50\r\n",
			column:    "power_w",
			rows:      3,
			startS:    0,
			durationS: 5,
			steps:     []wantProfileStep{{100, false, 3}, {50, false, 2}},
		},
		{
			// Hand worked: comment lines, empty lines and a line of spaces
			// are skipped; 3 data rows at 0, 1, 2 s → 7 W for 1 s, 8 W for
			// 1 + 1 s.
			name:      "comments and blank lines",
			in:        "# logged on the test bench\n\ntime_s,power_w\n# start\n0,7\n\n   \n1,8\n# still 8 W\n2,8\n\n",
			column:    "power_w",
			rows:      3,
			startS:    0,
			durationS: 3,
			steps:     []wantProfileStep{{7, false, 1}, {8, false, 2}},
		},
		{
			// Hand worked: voltage_v, an unnamed trailing column and a quoted
			// note with a comma and a line break (RFC 4180 §2 rule 6) are all
			// ignored; 3 rows at 0, 0.5, 1 s.
			name:      "extra columns are ignored",
			in:        "voltage_v,time_s,note,current_a,\n48.1,0,\"start, cold\",12,\n47.9,0.5,\"two\nlines\",12,\n47.5,1,,30,x\n",
			column:    "current_a",
			rows:      3,
			startS:    0,
			durationS: 1.5,
			steps:     []wantProfileStep{{12, false, 1}, {30, false, 0.5}},
		},
		{
			// Hand worked: spaces and tabs around names and values, quoted
			// values with inner spaces; 0.25 s between rows.
			name:      "spaces around names and values",
			in:        "  time_s , power_w \n 0 , 1.5e3 \n\t0.25,\" 1500 \"\n 0.5 ,  +2e3\n",
			column:    "power_w",
			rows:      3,
			startS:    0,
			durationS: 0.75,
			steps:     []wantProfileStep{{1500, false, 0.5}, {2000, false, 0.25}},
		},
		{
			// Hand worked: −0 equals 0 (IEEE 754), so both rows are rest and
			// merge; a value too small for a float64 (1e-400) rounds to 0.
			name:      "zero in any spelling is rest",
			in:        "time_s,power_w\n0,0\n1,-0\n2,0.000\n3,1e-400\n",
			column:    "power_w",
			rows:      4,
			startS:    0,
			durationS: 4,
			steps:     []wantProfileStep{{0, true, 4}},
		},
		{
			// Hand worked: values differing in the last digit are not merged;
			// merging is on exact equality only.
			name:      "near values stay apart",
			in:        "time_s,power_w\n0,100\n1,100.0000001\n2,100\n",
			column:    "power_w",
			rows:      3,
			startS:    0,
			durationS: 3,
			steps:     []wantProfileStep{{100, false, 1}, {100.0000001, false, 1}, {100, false, 1}},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			got, err := ParseProfileCSV(strings.NewReader(tc.in))
			if err != nil {
				t.Fatalf("ParseProfileCSV: %v", err)
			}
			if got.Column != tc.column {
				t.Errorf("Column = %q, want %q", got.Column, tc.column)
			}
			if got.Rows != tc.rows {
				t.Errorf("Rows = %d, want %d", got.Rows, tc.rows)
			}
			if got.StartS != tc.startS {
				t.Errorf("StartS = %g, want %g", got.StartS, tc.startS)
			}
			if math.Abs(got.DurationS-tc.durationS) > profileDurationTol {
				t.Errorf("DurationS = %.12g, want %g ± %g", got.DurationS, tc.durationS, profileDurationTol)
			}
			checkProfileSteps(t, got.Steps, tc.column, tc.steps)
		})
	}
}

func TestParseProfileCSVErrors(t *testing.T) {
	t.Parallel()
	// Line numbers are hand counted from 1, as an editor counts them; the
	// header is line 1 unless comment or blank lines come before it.
	tests := []struct {
		name   string
		in     string
		line   int
		column string
		msg    string // a part of the message that must appear
	}{
		{"empty file", "", 1, "", "no header row"},
		{"only comments", "# nothing logged\n\n", 1, "", "no header row"},
		{"no time_s", "t,power_w\n0,1\n1,1\n", 1, "", `no time_s column; the first row must be a header naming time_s and power_w or current_a (found "t", "power_w")`},
		{"data where the header should be", "0,100\n1,100\n", 1, "", "no time_s column"},
		{"no value column", "time_s,voltage_v\n0,1\n1,1\n", 1, "", `no power_w or current_a column; the header must name one of them (found "time_s", "voltage_v")`},
		{"names are lower case", "time_s,Power_W\n0,1\n1,1\n", 1, "", "no power_w or current_a column"},
		{"both value columns", "time_s,power_w,current_a\n0,1,1\n1,1,1\n", 1, "", "has both power_w and current_a"},
		{"duplicate time_s", "time_s,power_w, time_s\n", 1, "", "column time_s appears twice (columns 1 and 3)"},
		{"duplicate ignored column", "time_s,v,power_w,v\n", 1, "", "column v appears twice (columns 2 and 4)"},
		{"header after comments", "# bench log\n\ntime_s,voltage_v\n", 3, "", "no power_w or current_a column"},
		{"header only", "time_s,power_w\n", 1, "", "no data rows after the header; need at least two rows to know the sample interval"},
		{"one data row", "time_s,power_w\n# one sample\n0,5\n", 3, "", "need at least two rows to know the sample interval"},
		// A line of spaces after the last row is not a row: the error names
		// the row's line (hand counted).
		{"header, then a line of spaces", "time_s,power_w\n   \n", 1, "", "no data rows after the header"},
		{"one data row, then a line of spaces", "time_s,power_w\n0,5\n  \n", 2, "", "only one data row"},
		{"too many fields", "time_s,power_w\n0,5\n1,5,7\n", 3, "", "has 3 fields but the header on line 1 has 2"},
		{"too few fields", "time_s,power_w,voltage_v\n0,5,48\n1,5\n", 3, "", "has 2 fields but the header on line 1 has 3"},
		{"indented comment", "time_s,power_w\n0,5\n  # note\n1,5\n", 3, "", "a # comment must start in the first character of its line"},
		// encoding/csv's own errors, RFC 4180 §2 rules 5–7.
		{"bare quote", "time_s,power_w\n0,5\n1,5\"x\n", 3, "", `a " inside an unquoted value`},
		{"text after closing quote", "time_s,power_w\n0,5\n1,\"5\"x\n", 3, "", `has text after its closing "`},
		// The quote opened on line 3 runs to the end of the file, line 4,
		// which is where encoding/csv gives up.
		{"unclosed quote", "time_s,power_w\n0,5\n1,\"5\n2,5\n", 4, "", "the row starts on line 3"},
		// Cells.
		{"not a number", "time_s,power_w\n0,5\n1,abc\n", 3, "power_w", `"abc" is not a number`},
		{"empty value", "time_s,power_w\n0,5\n1,\n", 3, "power_w", "is empty; every row needs a number here"},
		{"empty quoted value", "time_s,power_w\n0,5\n1,\" \"\n", 3, "power_w", "is empty"},
		{"empty time", "time_s,current_a\n0,5\n,5\n", 3, "time_s", "is empty"},
		{"NaN value", "time_s,power_w\n0,5\n1,NaN\n", 3, "power_w", `"NaN" is not a finite number`},
		{"Inf value", "time_s,current_a\n0,+Inf\n1,5\n", 2, "current_a", `"+Inf" is not a finite number`},
		{"infinity time", "time_s,power_w\n0,5\n-infinity,5\n", 3, "time_s", `"-infinity" is not a finite number`},
		{"overflow", "time_s,power_w\n0,5\n1,1e400\n", 3, "power_w", `"1e400" is too large (beyond ±1.8e308)`},
		{"negative overflow", "time_s,power_w\n0,-1e400\n1,5\n", 2, "power_w", `"-1e400" is too large`},
		{"hexadecimal", "time_s,power_w\n0,0x1p4\n1,5\n", 2, "power_w", `"0x1p4" is not a number`},
		{"digit separator", "time_s,power_w\n0,1_000\n1,5\n", 2, "power_w", `"1_000" is not a number`},
		{"decimal comma", "time_s,power_w\n0,\"1,5\"\n1,5\n", 2, "power_w", `"1,5" is not a number; use a decimal point, not a comma`},
		{"two points", "time_s,power_w\n0,1.2.3\n1,5\n", 2, "power_w", `"1.2.3" is not a number`},
		{"unit in the cell", "time_s,power_w\n0,5 W\n1,5\n", 2, "power_w", `"5 W" is not a number`},
		{"bad time before bad value", "time_s,power_w\n0,5\nx,y\n", 3, "time_s", `"x" is not a number`},
		// A quoted note spanning lines 2–3: the bad cell after it is on line 3.
		{"cell after a multi-line field", "time_s,note,power_w\n0,\"a\nb\",x\n1,,5\n", 3, "power_w", `"x" is not a number`},
		// Times.
		{"repeated time", "time_s,power_w\n0,5\n0,6\n", 3, "time_s", "0 is not after 0 on line 2; time_s must strictly increase"},
		{"time goes back", "time_s,power_w\n0,5\n2,5\n1,5\n", 4, "time_s", "1 is not after 2 on line 3"},
		{"same time written twice", "time_s,power_w\n1,5\n# gap\n1.0,6\n", 4, "time_s", "1.0 is not after 1 on line 2"},
		// −1e308 to 1e308 is a finite pair whose difference overflows.
		{"span too long", "time_s,power_w\n-1e308,5\n1e308,5\n", 3, "time_s", "too long a time to add up"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			got, err := ParseProfileCSV(strings.NewReader(tc.in))
			if err == nil {
				t.Fatalf("ParseProfileCSV: no error, got %d steps %s", len(got.Steps), describeProfileSteps(got.Steps))
			}
			if got != nil {
				t.Errorf("ParseProfileCSV returned a profile with the error %v", err)
			}
			var pe *CSVError
			if !errors.As(err, &pe) {
				t.Fatalf("error %T %q, want a *CSVError", err, err)
			}
			if pe.Line != tc.line {
				t.Errorf("Line = %d, want %d (error %q)", pe.Line, tc.line, err)
			}
			if pe.Column != tc.column {
				t.Errorf("Column = %q, want %q (error %q)", pe.Column, tc.column, err)
			}
			if !strings.Contains(pe.Message, tc.msg) {
				t.Errorf("Message = %q, want it to contain %q", pe.Message, tc.msg)
			}
		})
	}
}

func TestParseProfileCSVErrorString(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		in   string
		want string
	}{
		// The format given in ParseProfileCSV's doc: the bad cell is on line 7
		// (header on line 1, six data rows follow).
		{"cell", "time_s,power_w\n0,1\n1,1\n2,1\n3,1\n4,1\n5,abc\n",
			`line 7, power_w: "abc" is not a number`},
		{"header", "time_s,power_w,current_a\n",
			"line 1: has both power_w and current_a; a profile is either power at the converter output or current at the bank terminals, so keep one column"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := ParseProfileCSV(strings.NewReader(tc.in))
			if err == nil || err.Error() != tc.want {
				t.Errorf("error = %v, want %q", err, tc.want)
			}
		})
	}
}

func TestParseProfileCSVReadError(t *testing.T) {
	t.Parallel()
	// A reader that fails after two complete lines: the failure is blamed on
	// line 3 (hand counted) and the reader's own error is kept for errors.Is.
	diskErr := errors.New("device gone")
	r := io.MultiReader(strings.NewReader("time_s,power_w\n0,5\n"), iotest.ErrReader(diskErr))
	_, err := ParseProfileCSV(r)
	var pe *CSVError
	if !errors.As(err, &pe) {
		t.Fatalf("error %T %v, want a *CSVError", err, err)
	}
	if pe.Line != 3 || !strings.Contains(pe.Message, "could not be read: device gone") {
		t.Errorf("got line %d %q, want line 3 and the reader's message", pe.Line, pe.Message)
	}
	if !errors.Is(err, diskErr) {
		t.Errorf("errors.Is(err, diskErr) = false, want true")
	}
}

// profileCSVLog builds an invented log of n rows 0.01 s apart. With vary,
// the value cycles through 0, 100, …, 600 W so no two neighbours are equal
// (the most steps); otherwise every row is 250 W (one step).
func profileCSVLog(n int, vary bool) []byte {
	b := make([]byte, 0, 16*n+32)
	b = append(b, "time_s,power_w\n"...)
	for i := range n {
		b = strconv.AppendFloat(b, float64(i)*0.01, 'f', 2, 64)
		if vary {
			b = append(b, ',')
			b = strconv.AppendInt(b, int64(i%7)*100, 10)
			b = append(b, '\n')
		} else {
			b = append(b, ",250\n"...)
		}
	}
	return b
}

func TestParseProfileCSVRowLimit(t *testing.T) {
	t.Parallel()
	t.Run("at the limit", func(t *testing.T) {
		t.Parallel()
		got, err := ParseProfileCSV(bytes.NewReader(profileCSVLog(ProfileCSVMaxRows, false)))
		if err != nil {
			t.Fatalf("ParseProfileCSV: %v", err)
		}
		// Hand computed: 10^6 rows of 250 W merge into one step; 10^6 − 1
		// intervals of 0.01 s plus the last row held 0.01 s = 10^4 s.
		if got.Rows != ProfileCSVMaxRows {
			t.Errorf("Rows = %d, want %d", got.Rows, ProfileCSVMaxRows)
		}
		checkProfileSteps(t, got.Steps, "power_w", []wantProfileStep{{250, false, 1e4}})
	})
	t.Run("one over", func(t *testing.T) {
		t.Parallel()
		_, err := ParseProfileCSV(bytes.NewReader(profileCSVLog(ProfileCSVMaxRows+1, false)))
		var pe *CSVError
		if !errors.As(err, &pe) {
			t.Fatalf("error %T %v, want a *CSVError", err, err)
		}
		// Hand computed: data row 1,000,001 is on line 1,000,002 after the
		// header; the message names the limit.
		if pe.Line != ProfileCSVMaxRows+2 || !strings.Contains(pe.Message, "more than 1000000 data rows") {
			t.Errorf("got %v, want line %d and the limit", err, ProfileCSVMaxRows+2)
		}
	})
}

// TestParseProfileCSVValuesShareOneArray is not parallel: AllocsPerRun
// counts every allocation in the process, so nothing else may run.
func TestParseProfileCSVValuesShareOneArray(t *testing.T) {
	// Two logs of 7000 rows, read alike by encoding/csv (one string per row):
	// one flat (1 step) and one where every row is a new value (7000 steps,
	// 6000 of them not rest, hand counted: 6 of every 7). If the values
	// shared one backing array, the varied log costs only a handful more
	// allocations (the growing list of runs); one allocation per value would
	// cost about 6000 more. The bound of 700 (a tenth of the rows) sits
	// between the two.
	const rows = 7000
	flat, varied := profileCSVLog(rows, false), profileCSVLog(rows, true)
	parse := func(data []byte) func() {
		return func() {
			if _, err := ParseProfileCSV(bytes.NewReader(data)); err != nil {
				t.Fatal(err)
			}
		}
	}
	extra := testing.AllocsPerRun(5, parse(varied)) - testing.AllocsPerRun(5, parse(flat))
	if extra > rows/10 {
		t.Errorf("a log of %d different values made %.0f more allocations than a flat one, want at most %d", rows, extra, rows/10)
	}
	got, err := ParseProfileCSV(bytes.NewReader(varied))
	if err != nil {
		t.Fatal(err)
	}
	n := 0
	for _, s := range got.Steps {
		if s.PowerW != nil {
			n++
		}
	}
	if len(got.Steps) != rows || n != 6000 {
		t.Errorf("got %d steps, %d with a value; want %d and 6000", len(got.Steps), n, rows)
	}
}

func TestParseProfileCSVTestdata(t *testing.T) {
	t.Parallel()
	tests := []struct {
		file      string
		column    string
		rows      int
		durationS float64
		steps     []wantProfileStep
	}{
		{
			// Hand worked from the file: rows every 0.5 s from 0 to 11.5 s:
			// 2 rest, 2 at 2400 W, 4 at 1500 W, 12 at 800 W, 4 rest; the last
			// rest row is held 0.5 s. voltage_v is ignored.
			file:      "pump_start_power.csv",
			column:    "power_w",
			rows:      24,
			durationS: 12,
			steps:     []wantProfileStep{{0, true, 1}, {2400, false, 1}, {1500, false, 2}, {800, false, 6}, {0, true, 2}},
		},
		{
			// Hand worked from the file: rows every 0.1 s from 0 to 3.1 s:
			// 2 rest, 3 at 40 A, 5 at 2 A, 3 at 40 A, 5 at 2 A, 6 at −5 A
			// (recharge), 8 rest; the last rest row is held 0.1 s. temp_c is
			// ignored.
			file:      "pulse_current.csv",
			column:    "current_a",
			rows:      32,
			durationS: 3.2,
			steps: []wantProfileStep{{0, true, 0.2}, {40, false, 0.3}, {2, false, 0.5}, {40, false, 0.3},
				{2, false, 0.5}, {-5, false, 0.6}, {0, true, 0.8}},
		},
	}
	for _, tc := range tests {
		t.Run(tc.file, func(t *testing.T) {
			t.Parallel()
			f, err := os.Open(filepath.Join("..", "testdata", "profiles", tc.file))
			if err != nil {
				t.Fatal(err)
			}
			defer f.Close()
			got, err := ParseProfileCSV(f)
			if err != nil {
				t.Fatalf("ParseProfileCSV: %v", err)
			}
			if got.Column != tc.column || got.Rows != tc.rows || got.StartS != 0 {
				t.Errorf("got Column %q, Rows %d, StartS %g; want %q, %d, 0", got.Column, got.Rows, got.StartS, tc.column, tc.rows)
			}
			if math.Abs(got.DurationS-tc.durationS) > profileDurationTol {
				t.Errorf("DurationS = %.12g, want %g ± %g", got.DurationS, tc.durationS, profileDurationTol)
			}
			checkProfileSteps(t, got.Steps, tc.column, tc.steps)
		})
	}
}

// FuzzParseProfileCSV checks that any input gives either a well-formed
// profile or a *CSVError, never a panic.
func FuzzParseProfileCSV(f *testing.F) {
	for _, s := range []string{
		"time_s,power_w\n0,100\n1,100\n3,50\n4,0\n6,0\n7,-20\n",
		"\ufefftime_s,current_a\r\n0,1\r\n1,2\r\n",
		"# c\n\ntime_s,note,power_w\n0,\"a\nb\",5\n1,,0\n",
		"time_s,power_w\n0,NaN\n",
		"time_s,power_w\n-1e308,5\n1e308,5\n",
		"time_s,power_w\n0,\"5\n",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, in string) {
		got, err := ParseProfileCSV(strings.NewReader(in))
		if err != nil {
			var pe *CSVError
			if !errors.As(err, &pe) || pe.Line < 1 || pe.Message == "" {
				t.Fatalf("error %T %q, want a *CSVError with a line and a message", err, err)
			}
			return
		}
		if got.Rows < 2 || len(got.Steps) < 1 || len(got.Steps) > got.Rows {
			t.Fatalf("Rows %d, %d steps: want at least 2 rows and 1 to Rows steps", got.Rows, len(got.Steps))
		}
		if got.Column != profilePowerColumn && got.Column != profileCurrentColumn {
			t.Fatalf("Column = %q", got.Column)
		}
		sum := 0.0
		for i, s := range got.Steps {
			value, other := s.PowerW, s.CurrentA
			if got.Column == profileCurrentColumn {
				value, other = s.CurrentA, s.PowerW
			}
			if other != nil || s.ResistanceOhm != nil || s.Rest == (value != nil) {
				t.Fatalf("step %d: not exactly one of rest or a %s value: %+v", i, got.Column, s)
			}
			if value != nil && (*value == 0 || math.IsNaN(*value) || math.IsInf(*value, 0)) {
				t.Fatalf("step %d: value %g, want finite and non-zero", i, *value)
			}
			if !(s.DurationS > 0) || math.IsInf(s.DurationS, 0) {
				t.Fatalf("step %d: DurationS %g, want finite and positive", i, s.DurationS)
			}
			if i > 0 {
				prev := got.Steps[i-1]
				if (prev.Rest && s.Rest) || (value != nil && !prev.Rest && *value == profileStepValue(prev)) {
					t.Fatalf("steps %d and %d have the same value and were not merged", i-1, i)
				}
			}
			sum += s.DurationS
		}
		// Same additions in the same order as ParseProfileCSV: exact.
		if sum != got.DurationS {
			t.Fatalf("DurationS %g, sum of steps %g", got.DurationS, sum)
		}
	})
}

func profileStepValue(s Step) float64 {
	if s.PowerW != nil {
		return *s.PowerW
	}
	return *s.CurrentA
}

// BenchmarkParseProfileCSV parses an invented 10^6-row log in which every
// row starts a new step (the worst case for memory).
func BenchmarkParseProfileCSV(b *testing.B) {
	const rows = 1_000_000
	data := profileCSVLog(rows, true)
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		p, err := ParseProfileCSV(bytes.NewReader(data))
		if err != nil {
			b.Fatal(err)
		}
		if p.Rows != rows {
			b.Fatalf("Rows = %d, want %d", p.Rows, rows)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/rows, "ns/row")
}
