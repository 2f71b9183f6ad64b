package sizing

import (
	"bytes"
	"encoding/json"
	"os"
	"strings"
	"testing"

	"capbank/sizing/internal/approx"
	"capbank/sizing/sizingtest"
)

// loggedDayCSV is the shared invented logged day (sizingtest.LoggedDayCSV).
var loggedDayCSV = sizingtest.LoggedDayCSV

// profileDesign is testdata/logger-hold-up.json with its load replaced by
// load (the steps cleared).
func profileDesign(t testing.TB, load func(*Load)) *Design {
	t.Helper()
	data, err := os.ReadFile("../testdata/logger-hold-up.json")
	if err != nil {
		t.Fatal(err)
	}
	d, err := DecodeDesign(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	d.Load.Steps = nil
	load(&d.Load)
	return d
}

// A logged profile given as CSV text, or as the text of a file the design
// names, sizes exactly as the same profile given as steps: the steps are
// ParseProfileCSV's, so every figure of the report is the same number.
func TestProfileCSVTextSizesAsSteps(t *testing.T) {
	t.Parallel()
	text := loggedDayCSV(86_400)
	parsed, err := ParseProfileCSV(strings.NewReader(text))
	if err != nil {
		t.Fatal(err)
	}
	asSteps := profileDesign(t, func(l *Load) { l.Steps = parsed.Steps })
	want, err := Size(asSteps)
	if err != nil {
		t.Fatal(err)
	}
	wantJSON, _ := json.Marshal(want)
	cases := []struct {
		name string
		load func(*Load)
	}{
		{"inline text", func(l *Load) { l.ProfileCSVText = text }},
		{"file the design names", func(l *Load) { l.ProfileCSV = "day.csv"; l.AttachProfileFile(text) }},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			got, err := Size(profileDesign(t, tc.load))
			if err != nil {
				t.Fatal(err)
			}
			// 86 400 one-second rows: 86 400 s of profile (own arithmetic).
			approx.Near(t, "profile_duration_s", got.ProfileDurationS, 86_400, 1e-12)
			if got.Recommended == nil || want.Recommended == nil || *got.Recommended != *want.Recommended {
				t.Fatalf("recommended %v, want %v", got.Recommended, want.Recommended)
			}
			// The same steps: identical figures (rel = 0, the same arithmetic).
			for i := range want.Candidates {
				g, w := got.Candidates[i], want.Candidates[i]
				if g.Series != w.Series || g.Parallel != w.Parallel {
					t.Errorf("%s: %d×%d, want %d×%d", w.CellID, g.Series, g.Parallel, w.Series, w.Parallel)
				}
				if w.Feasible {
					approx.Near(t, w.CellID+" lowest terminal", g.MinTerminalV, w.MinTerminalV, 0)
				}
			}
			gotJSON, _ := json.Marshal(got)
			if !bytes.Equal(gotJSON, wantJSON) {
				t.Errorf("the report differs from the one of the same profile as steps")
			}
		})
	}
}

// A load gives its profile one way; every other way, and a file nobody
// read, is refused by its field, as is a bad row, with its line and column.
func TestProfileLoadRules(t *testing.T) {
	t.Parallel()
	good := "time_s,power_w\n0,1\n1,2\n"
	one := 1.0
	cases := []struct {
		name       string
		load       func(*Load)
		field      string
		rule, text string
	}{
		{"steps and text", func(l *Load) {
			l.Steps = []Step{{PowerW: &one, DurationS: 1}}
			l.ProfileCSVText = good
		}, "load.profile_csv_text", "one_profile", "cannot be given with load.steps"},
		{"file and text", func(l *Load) { l.ProfileCSV = "day.csv"; l.ProfileCSVText = good },
			"load.profile_csv_text", "one_profile", "cannot be given with load.profile_csv"},
		{"steps and a read file", func(l *Load) {
			l.Steps = []Step{{PowerW: &one, DurationS: 1}}
			l.ProfileCSV = "day.csv"
			l.AttachProfileFile(good)
		}, "load.profile_csv", "one_profile", "cannot be given with load.steps"},
		{"nothing", func(*Load) {}, "load.steps", "min", "must have at least 1 item"},
		{"a file nobody read", func(l *Load) { l.ProfileCSV = "day.csv" },
			"load.profile_csv", "file_not_read", "inline as load.profile_csv_text or as its own part of a multipart request"},
		{"bad row inline", func(l *Load) { l.ProfileCSVText = "time_s,power_w\n0,1\n1,abc\n" },
			"load.profile_csv_text", "csv", `line 3, power_w: "abc" is not a number`},
		{"bad row in the file", func(l *Load) { l.ProfileCSV = "day.csv"; l.AttachProfileFile("time_s,power_w\n0,1\n0,2\n") },
			"load.profile_csv", "csv", "line 3, time_s"},
		// 2e9 W is above Step's 1e9 W ceiling (design.go, power_w lte=1e9).
		{"power beyond range", func(l *Load) { l.ProfileCSVText = "time_s,power_w\n0,1\n10,2e9\n" },
			"load.profile_csv_text", "lte", "the step from time_s 10: its power_w must be at most 1e9"},
		// Step's bounds (design.go): duration_s gte=1e-9, current_a gte=-1e6.
		{"step too short", func(l *Load) { l.ProfileCSVText = "time_s,power_w\n0,1\n1,2\n1.0000000000001,3\n2,4\n" },
			"load.profile_csv_text", "gte", "the step from time_s 1: its duration_s must be at least 1e-9"},
		{"charging beyond range", func(l *Load) { l.ProfileCSVText = "time_s,current_a\n0,1\n3,-2e6\n4,0\n" },
			"load.profile_csv_text", "gte", "the step from time_s 3: its current_a must be at least -1e6"},
		// The profile lasts 10 s (rows at 0 and 5 s, the last held 5 s), so
		// a period of 8 s is shorter than one event (own arithmetic).
		{"period shorter than the profile", func(l *Load) {
			l.ProfileCSVText = "time_s,power_w\n0,1\n5,2\n"
			p := 8.0
			l.PeriodS = &p
		}, "load.period_s", "at_least_pass", "shorter than one event"},
		{"femtowatt", func(l *Load) { l.ProfileCSVText = "time_s,power_w\n0,1\n5,1e-18\n6,1\n" },
			"load.profile_csv_text", "min_power", "the step from time_s 5 has power_w 1e-18 W"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			err := Validate(profileDesign(t, tc.load))
			ve, ok := err.(ValidationError)
			if !ok {
				t.Fatalf("Validate = %v, want a ValidationError", err)
			}
			for _, fe := range ve {
				if fe.Field == tc.field && fe.Rule == tc.rule && strings.Contains(fe.Message, tc.text) {
					return
				}
			}
			t.Errorf("Validate = %v, want %s (%s) saying %q", ve, tc.field, tc.rule, tc.text)
		})
	}
}

// A design with a profile round-trips through its JSON: the text travels,
// the steps stay out of the file.
func TestProfileCSVTextInDesignFile(t *testing.T) {
	t.Parallel()
	d := profileDesign(t, func(l *Load) { l.ProfileCSVText = "time_s,current_a\n0,2\n3,0\n4,1\n" })
	data, err := json.Marshal(d)
	if err != nil {
		t.Fatal(err)
	}
	if bytes.Contains(data, []byte(`"steps"`)) {
		t.Errorf("design file %s carries steps beside the profile", data)
	}
	back, err := DecodeDesign(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	rep, err := Size(back)
	if err != nil {
		t.Fatal(err)
	}
	// Rows at 0, 3 and 4 s, the last held for the 1 s before it: 5 s
	// (ParseProfileCSV's zero-order hold, own arithmetic).
	approx.Near(t, "profile_duration_s", rep.ProfileDurationS, 5, 1e-12)
	if n := len(back.Load.StepList()); n != 3 {
		t.Errorf("%d steps, want 3 (2 A, rest, 1 A)", n)
	}
}

// BenchmarkSizeProfileCSVText sizes a design whose load is a logged
// profile of 10⁶ rows given as CSV text: parsing, validation and sizing.
func BenchmarkSizeProfileCSVText(b *testing.B) {
	text := loggedDayCSV(1_000_000)
	b.SetBytes(int64(len(text)))
	for b.Loop() {
		d := profileDesign(b, func(l *Load) { l.ProfileCSVText = text })
		if _, err := Size(d); err != nil {
			b.Fatal(err)
		}
	}
}

// A profile's totals are the integrals of its zero-order hold.
func TestProfileCSVTotals(t *testing.T) {
	t.Parallel()
	// 100 W for 2 s, rest 1 s, −50 W (charging) for 3 s, 20 W for the last
	// row's 3 s: drawn 100·2 + 20·3 = 260 J, returned 50·3 = 150 J (own
	// arithmetic of the zero-order hold, ParseProfileCSV's doc comment).
	p, err := ParseProfileCSV(strings.NewReader("time_s,power_w\n0,100\n2,0\n3,-50\n6,20\n"))
	if err != nil {
		t.Fatal(err)
	}
	got := p.Totals()
	const rel = 1e-12 // sums of exact products
	approx.Near(t, "drawn", got.Drawn, 260, rel)
	approx.Near(t, "returned", got.Returned, 150, rel)
	approx.Near(t, "peak", got.Peak, 100, rel)
	approx.Near(t, "lowest", got.Lowest, -50, rel)
}
