package cellmodel

import (
	"encoding/json"
	"errors"
	"math"
	"strings"
	"testing"
)

func f64(x float64) *float64 { return &x }

// twoBranchSpec is the two-branch parameter set of REFERENCES.md 9.2.
func twoBranchSpec() Spec {
	return Spec{Kind: KindTwoBranch, R0Ohm: f64(10.0478e-3), C0F: f64(89.03), KvFPerV: f64(29.1062),
		R2Ohm: f64(17.4976), C2F: f64(13.7162), RleakOhm: f64(5000)}
}

// threeBranchSpec is an invented three-branch cell of the size of a 1500 F
// cell (no datasheet).
func threeBranchSpec() Spec {
	return Spec{Kind: KindThreeBranch, RiOhm: f64(2.5e-3), Ci0F: f64(1100), Ci1FPerV: f64(190),
		RdOhm: f64(0.9), CdF: f64(100), RlOhm: f64(5.2), ClF: f64(220), RleakOhm: f64(9000)}
}

func TestSpecValidate(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name  string
		edit  func(*Spec)
		field string // "" : valid
		text  string
	}{
		{"two-branch valid", func(*Spec) {}, "", ""},
		{"three-branch valid", func(s *Spec) { *s = threeBranchSpec() }, "", ""},
		{"leakage optional", func(s *Spec) { s.RleakOhm = nil }, "", ""},
		{"negative kv within range", func(s *Spec) { s.KvFPerV = f64(-30) }, "", ""},
		{"kind missing", func(s *Spec) { s.Kind = "" }, "kind", "required"},
		{"kind unknown", func(s *Spec) { s.Kind = "four-branch" }, "kind", "not a model"},
		{"zero capacitance", func(s *Spec) { s.C0F = f64(0) }, "c0_f", "above 0 F"},
		{"negative capacitance", func(s *Spec) { s.C2F = f64(-1) }, "c2_f", "above 0 F"},
		{"NaN capacitance", func(s *Spec) { s.C2F = f64(math.NaN()) }, "c2_f", "finite"},
		{"zero resistance", func(s *Spec) { s.R0Ohm = f64(0) }, "r0_ohm", "above 0 Ω"},
		{"infinite resistance", func(s *Spec) { s.R2Ohm = f64(math.Inf(1)) }, "r2_ohm", "finite"},
		{"zero leakage", func(s *Spec) { s.RleakOhm = f64(0) }, "rleak_ohm", "above 0 Ω"},
		{"missing key", func(s *Spec) { s.KvFPerV = nil }, "kv_f_per_v", "required"},
		{"foreign key", func(s *Spec) { s.CdF = f64(3) }, "cd_f", "not a key of a two-branch"},
		// 89.03 − 40·2.7 = −18.97 F at the top voltage.
		{"capacitance negative at the top", func(s *Spec) { s.KvFPerV = f64(-40) }, "kv_f_per_v", "above 0 over the whole voltage range"},
		{"three-branch negative at the top", func(s *Spec) { *s = threeBranchSpec(); s.Ci1FPerV = f64(-500) }, "ci1_f_per_v", "above 0"},
		{"three-branch missing", func(s *Spec) { *s = threeBranchSpec(); s.ClF = nil }, "cl_f", "required"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s := twoBranchSpec()
			tc.edit(&s)
			err := s.Validate(2.7)
			if tc.field == "" {
				if err != nil {
					t.Fatalf("Validate: %v, want nil", err)
				}
				return
			}
			var fe FieldErrors
			if !errors.As(err, &fe) || len(fe) == 0 {
				t.Fatalf("Validate: %v, want field errors", err)
			}
			if fe[0].Field != tc.field || !strings.Contains(fe[0].Message, tc.text) {
				t.Errorf("Validate: %v, want %s: …%s…", err, tc.field, tc.text)
			}
		})
	}
}

// TestSpecJSONKeys decodes the keys of the issue and builds the models.
func TestSpecJSONKeys(t *testing.T) {
	t.Parallel()
	var two, three Spec
	if err := json.Unmarshal([]byte(`{"kind":"two-branch","r0_ohm":0.01,"c0_f":89,"kv_f_per_v":29,"r2_ohm":17.5,"c2_f":13.7,"rleak_ohm":5000}`), &two); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal([]byte(`{"kind":"three-branch","ri_ohm":0.0025,"ci0_f":1100,"ci1_f_per_v":190,"rd_ohm":0.9,"cd_f":100,"rl_ohm":5.2,"cl_f":220,"rleak_ohm":9000}`), &three); err != nil {
		t.Fatal(err)
	}
	for _, s := range []Spec{two, three} {
		if err := s.Validate(2.7); err != nil {
			t.Fatalf("%s: %v", s.Kind, err)
		}
	}
	m2, m3 := two.Model(), three.Model()
	if m2.RiOhm != 0.01 || m2.C0F != 89 || m2.KvFPerV != 29 || m2.Slow[0] != (Branch{17.5, 13.7}) || m2.LeakageOhm != 5000 {
		t.Errorf("two-branch model %+v", m2)
	}
	if m3.RiOhm != 0.0025 || m3.C0F != 1100 || m3.KvFPerV != 190 || m3.Slow[0] != (Branch{0.9, 100}) || m3.Slow[1] != (Branch{5.2, 220}) || m3.LeakageOhm != 9000 {
		t.Errorf("three-branch model %+v", m3)
	}
}
