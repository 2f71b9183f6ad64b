package figures

import (
	"strings"
	"testing"

	"capbank/sizing"
)

func ptr(v float64) *float64 { return &v }

// busHoldUp is a hand-made candidate (not from sizing.Size): 72 cells of
// 350 F in 18 s × 4 p on a 48 V → 24 V window, end of life at 0.8 × C and
// cold at −20 °C; its figures follow from those by hand (C = 350·4/18,
// ½·C·48², ½·0.8·C·(48² − 24²), 48 V / 7.2 mΩ).
func busHoldUp() (*sizing.Candidate, *sizing.Report) {
	c := &sizing.Candidate{
		CellID: "c350", Feasible: true, Series: 18, Parallel: 4, Cells: 72, Limit: "voltage",
		CellV: 48.0 / 18, CellCeilingV: 2.7,
		CapacitanceF: 350.0 * 4 / 18, WorstCapacitanceF: 0.8 * 350 * 4 / 18, ESROhm: 0.0072, WorstESROhm: 0.0216, ColdESRFactor: 1.5,
		StoredEnergyJ: 89600, UsableEnergyJ: 53760,
		RuntimeS: ptr(23.3068528), RuntimeEnd: "voltage", RuntimeEstimated: true,
		MinTerminalV: 25.6789, MinCellV: 25.6789 / 18, MinV: 24, EndCapacitorV: 26.1,
		BankEnergyJ: 48000, LoadEnergyJ: 45600, ESRLossJ: 512.3, LeakageLossJ: 0.4,
		WorstCase:    "end of life: capacitance ×0.8, ESR ×2; no minus tolerance given; at −20 °C: ESR ×1.5, capacitance not derated (the cell gives no cold factor)",
		PeakCurrentA: 141.67, CellPeakCurrentA: 35.42, RMSCurrentA: 98.2, CellRMSCurrentA: 24.5,
		Hazards:    sizing.Hazards{MaxV: 48, StoredEnergyJ: 89600, ShortCircuitCurrentA: 48 / 0.0072, CellEnergyWh: 350 * 2.7 * 2.7 / 2 / 3600},
		TotalPrice: ptr(468), MassKg: ptr(4.536), VolumeL: ptr(3.6), InrushCurrentA: 48 / 0.0072,
	}
	return c, &sizing.Report{MaxV: 48, MinV: 24, ColdC: ptr(-20)}
}

// TestCandidate checks every row of a candidate without heat, balancing or
// life figures: label, value, unit and note, as the page, read row by row,
// shows them.
func TestCandidate(t *testing.T) {
	t.Parallel()
	c, r := busHoldUp()
	// Values rounded by hand to the figures each row states; "_" stands for
	// the no-break space inside a note.
	want := []string{
		"# Bank",
		"Arrangement | 18 in series × 4 strings, 72 cells |  | strings set by the window bottom",
		"Worst case | end of life: capacitance ×0.8, ESR ×2; no minus tolerance given; at −20 °C: ESR ×1.5, capacitance not derated (the cell gives no cold factor) |  | what the worst-case figures apply",
		"Cell voltage at the window top | 2.667 | V | ceiling 2.7_V",
		"Capacitance | 77.78 | F | worst case 62.22_F",
		"ESR | 7.2 | mΩ | worst case 21.6_mΩ, cold ×1.5",
		"Leakage and balancing drain | — |  | as one resistance across the bank",
		"# Energy and runtime, worst case",
		"Stored energy at the window top | 89.6 | kJ | 24.9_Wh, beginning of life",
		"Usable energy in the window | 53.76 | kJ | 14.9_Wh",
		"Runtime | ≈23.3 | s | until the window bottom, estimated from the drain per period, repeating the steps",
		"Lowest terminal voltage | 25.68 | V | window bottom 24_V",
		"Lowest cell voltage | 1.427 | V | bank terminal ÷ 18 in series",
		"Capacitor voltage at the end of the pass | 26.1 | V | ",
		"Energy out of the bank terminals | 48 | kJ | over the sizing pass, before the converter",
		"Energy delivered to the load | 45.6 | kJ | over the sizing pass, after the converter's efficiency",
		"Lost in the ESR | 512 | J | the cells' own",
		"Lost in leakage and balancing | 400 | mJ | ",
		"# Current, worst case",
		"Peak current | 142 | A | per cell 35.4_A",
		"RMS current | 98.2 | A | per cell 24.5_A, over the pass, as if it repeated back to back (no period given)",
		"# Charging and connection",
		"Recharge | — |  | give the charger to see the recharge time",
		"Inrush current | 6.67 | kA | into the empty bank connected straight across the window top: max_v ÷ (ESR + wiring)",
		"# Safety figures",
		"Bank voltage | 48 | V | at the window top",
		"Stored energy | 89.6 | kJ | ",
		"Short-circuit current | 6.67 | kA | window top ÷ bank ESR at beginning of life",
		"Energy per cell | 354 | mWh | as transport rules count it",
		"# Price, mass and volume",
		"Price | 468.00 |  | cells only, in the currency of the unit price",
		"Mass | 4.54 | kg | cells only",
		"Volume | 3.6 | L | cells only, no spacing",
	}
	var got []string
	for _, g := range Candidate(c, r) {
		got = append(got, "# "+g.Title)
		for _, row := range g.Rows {
			got = append(got, strings.ReplaceAll(strings.Join([]string{row.Label, row.Value, row.Unit, row.Note}, " | "), nbsp, "_"))
		}
	}
	if strings.Join(got, "\n") != strings.Join(want, "\n") {
		t.Errorf("rows:\n%s\nwant:\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
}

// TestChargingRows: the charger's times and energies, the wiring's loss
// and a precharge resistor, as the page, the PDF and the XLSX show them.
func TestChargingRows(t *testing.T) {
	t.Parallel()
	c, r := busHoldUp()
	c.RechargeS, c.FirstChargeS, c.ChargeEnergyJ, c.ChargeSeriesLossJ = ptr(412.5), ptr(1330), ptr(23456), ptr(81.2)
	c.WiringLossJ, c.InrushCurrentA = 40.5, 20
	c.Precharge = &sizing.Precharge{NeededOhm: 2.39, ResistanceOhm: 2.4, PeakCurrentA: 19.94, PeakPowerW: 954, EnergyJ: 89600, TimeTo99S: 859.6}
	want := map[string]string{
		"Recharge after the event":                "6.88 | min",
		"First charge from empty":                 "22.2 | min",
		"Energy from the charger's supply":        "23.46 | kJ",
		"Lost in ESR and wiring while recharging": "81.2 | J",
		"Lost in the wiring":                      "40.5 | J",
		"Inrush current":                          "20 | A",
		"Precharge resistor":                      "2.4 | Ω",
		"Precharge pulse energy":                  "89.6 | kJ",
		"Precharge time to 99 %":                  "14.3 | min",
	}
	got := map[string]string{}
	for _, g := range Candidate(c, r) {
		for _, row := range g.Rows {
			got[row.Label] = row.Value + " | " + row.Unit
		}
	}
	for label, w := range want {
		if got[label] != w {
			t.Errorf("%s: %q, want %q", label, got[label], w)
		}
	}
}

// TestCandidateEdges: a runtime beyond what sizing follows, one followed
// step by step, and a bank lighter than 1 kg.
func TestCandidateEdges(t *testing.T) {
	t.Parallel()
	c, r := busHoldUp()
	c.RuntimeS, c.RuntimeEstimated, c.RuntimeEnd, c.MassKg = nil, false, "", ptr(0.062)
	rows := map[string]Row{}
	for _, g := range Candidate(c, r) {
		for _, row := range g.Rows {
			rows[row.Label] = row
		}
	}
	// sizing.RuntimeLimitS is 10⁷ s: 115.74 days, which "116 days" would
	// overstate; the README says "not within 10⁷ s".
	if sizing.RuntimeLimitS != 1e7 {
		t.Fatalf("sizing.RuntimeLimitS is %g s; runtimeLimit says 10⁷ s", sizing.RuntimeLimitS)
	}
	if got, want := rows["Runtime"].Text(), "beyond 10⁷"+nbsp+"s"; got != want {
		t.Errorf("runtime %q, want %q", got, want)
	}
	if got, want := rows["Runtime"].Note, "not reached within the time followed, repeating the steps"; got != want {
		t.Errorf("runtime note %q, want %q", got, want)
	}
	if got := Runtime(c); got != rows["Runtime"].Text() {
		t.Errorf("Runtime %q, the row says %q", got, rows["Runtime"].Text())
	}
	if got, want := rows["Mass"].Text(), "62"+nbsp+"g"; got != want { // 0.062 kg
		t.Errorf("mass %q, want %q", got, want)
	}
	if r := rows["Runtime"]; r.HasNum {
		t.Errorf("runtime beyond the limit has a number %v %s", r.Num, r.Base)
	}
}

// TestCandidateNumbers: a row of a number keeps it unrounded in its unit
// without prefix, for a spreadsheet's number cell; words keep none.
func TestCandidateNumbers(t *testing.T) {
	t.Parallel()
	c, r := busHoldUp()
	rows := map[string]Row{}
	for _, g := range Candidate(c, r) {
		for _, row := range g.Rows {
			rows[row.Label] = row
		}
	}
	for label, want := range map[string]struct {
		v    float64
		base string
	}{
		"Stored energy at the window top": {89600, "J"},                       // shown 89.6 kJ
		"ESR":                             {0.0072, "Ω"},                      // shown 7.2 mΩ
		"Runtime":                         {23.3068528, "s"},                  // shown ≈23.3 s
		"Peak current":                    {141.67, "A"},                      // shown 142 A
		"Energy per cell":                 {350 * 2.7 * 2.7 / 2 / 3600, "Wh"}, // shown 354 mWh
		"Price":                           {468, ""},                          // the design's currency
		"Mass":                            {4.536, "kg"},                      // shown 4.54 kg
	} {
		got := rows[label]
		if !got.HasNum || got.Num != want.v || got.Base != want.base {
			t.Errorf("%s: number %v %q (has %v), want %v %q", label, got.Num, got.Base, got.HasNum, want.v, want.base)
		}
	}
	for _, label := range []string{"Arrangement", "Leakage and balancing drain"} { // words; None
		if rows[label].HasNum {
			t.Errorf("%s has a number %v", label, rows[label].Num)
		}
	}
}

func TestSortedFlags(t *testing.T) {
	t.Parallel()
	flags := []sizing.Flag{
		{Code: "a", Severity: sizing.Info}, {Code: "b", Severity: "odd"}, {Code: "c", Severity: sizing.Danger},
		{Code: "d", Severity: sizing.Warning}, {Code: "e", Severity: sizing.Danger},
	}
	var got []string
	for _, f := range SortedFlags(flags) {
		got = append(got, f.Code)
	}
	// Danger, warning, info, then an unknown grade; report order within one.
	if strings.Join(got, "") != "cedab" {
		t.Errorf("order %v, want c e d a b", got)
	}
	if flags[0].Code != "a" {
		t.Error("SortedFlags reordered its argument")
	}
}

// TestCandidateBalancingPerString: sizing counts the balancing circuits
// and their standing loss for one string (Count is the series count) and
// for the bank, so an 18 s × 4 p bank has 18 per string, 72 in all, and
// the standing loss row states the bank's, with the string's beside it.
func TestCandidateBalancingPerString(t *testing.T) {
	t.Parallel()
	c, r := busHoldUp()
	c.Balancing = &sizing.BalancingResult{Kind: "passive", Count: 18, BankCount: 72, LossW: 0.0504, BankLossW: 0.2016}
	rows := map[string]Row{}
	for _, g := range Candidate(c, r) {
		for _, row := range g.Rows {
			rows[row.Label] = row
		}
	}
	if got, want := rows["Kind"].Note, "18 per string, 72 in the bank, one per cell"; got != want {
		t.Errorf("kind note %q, want %q", got, want)
	}
	loss := rows["Standing loss, whole bank"]
	if got, want := loss.Text(), "202"+nbsp+"mW"; got != want {
		t.Errorf("standing loss of the bank %q, want %q", got, want)
	}
	if got, want := loss.Note, "at the window top; per string 50.4"+nbsp+"mW"; got != want {
		t.Errorf("standing loss note %q, want %q", got, want)
	}
}

// TestArrangementWords: a bank's arrangement is written in words that
// cannot be read as a time ("23 s" beside a runtime of "67.3 s"), with the
// singular for one string or one cell (issue 17).
func TestArrangementWords(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name                   string
		series, strings, cells int
		want                   string
	}{
		{"one string", 23, 1, 23, "23 in series × 1 string, 23 cells"},
		{"four strings", 15, 4, 60, "15 in series × 4 strings, 60 cells"},
		{"one cell", 1, 1, 1, "1 in series × 1 string, 1 cell"},
		{"no count", 16, 2, 0, "16 in series × 2 strings"},
	} {
		if got := Arrangement(tc.series, tc.strings, tc.cells); got != tc.want {
			t.Errorf("%s: %q, want %q", tc.name, got, tc.want)
		}
	}
	c := sizing.Candidate{Series: 23, Parallel: 1, Cells: 23}
	if got := BankText(c); got != "23 in series × 1 string, 23 cells" || strings.Contains(got, " s × ") {
		t.Errorf("BankText %q", got)
	}
}

// A yield shows the digits that tell 99.9 % from 99.99 %.
func TestYieldText(t *testing.T) {
	for _, tc := range []struct {
		y    float64
		want string
	}{{1, "100 %"}, {0.5, "50.0 %"}, {0.999, "99.90 %"}, {0.9997, "99.970 %"}, {0.99995, "99.9950 %"}, {0.95, "95.0 %"}} {
		if got := strings.ReplaceAll(YieldText(tc.y), nbsp, " "); got != tc.want {
			t.Errorf("YieldText(%v) = %q, want %q", tc.y, got, tc.want)
		}
	}
}
