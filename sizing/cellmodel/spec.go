package cellmodel

import (
	"fmt"
	"math"
)

// The kinds of Spec.
const (
	// KindTwoBranch is the two-branch model after Faranda (2007).
	KindTwoBranch = "two-branch"
	// KindThreeBranch is the three-branch model after Zubieta and Bonert
	// (IEEE Trans. Ind. Appl. 36(1), 2000).
	KindThreeBranch = "three-branch"
)

// Spec is a cell's model as written in a design (the cell key "model").
// Every value is per cell, in SI units. Which keys belong depends on Kind:
//
//	two-branch:   r0_ohm, c0_f, kv_f_per_v, r2_ohm, c2_f, rleak_ohm
//	three-branch: ri_ohm, ci0_f, ci1_f_per_v, rd_ohm, cd_f, rl_ohm, cl_f, rleak_ohm
//
// rleak_ohm is optional (absent: no leakage in the model); the voltage
// coefficients may be negative as long as the capacitance stays positive
// up to the cell's top voltage; every other key is required.
type Spec struct {
	Kind string `json:"kind"`

	// Two-branch: the fast branch R0 with C0 + Kv·v, the slow branch R2, C2.
	R0Ohm   *float64 `json:"r0_ohm,omitempty"`
	C0F     *float64 `json:"c0_f,omitempty"`
	KvFPerV *float64 `json:"kv_f_per_v,omitempty"`
	R2Ohm   *float64 `json:"r2_ohm,omitempty"`
	C2F     *float64 `json:"c2_f,omitempty"`

	// Three-branch: immediate Ri with Ci0 + Ci1·v, delayed Rd, Cd,
	// long-term Rl, Cl.
	RiOhm    *float64 `json:"ri_ohm,omitempty"`
	Ci0F     *float64 `json:"ci0_f,omitempty"`
	Ci1FPerV *float64 `json:"ci1_f_per_v,omitempty"`
	RdOhm    *float64 `json:"rd_ohm,omitempty"`
	CdF      *float64 `json:"cd_f,omitempty"`
	RlOhm    *float64 `json:"rl_ohm,omitempty"`
	ClF      *float64 `json:"cl_f,omitempty"`
	RleakOhm *float64 `json:"rleak_ohm,omitempty"`
}

// FieldError is a problem with one key of a Spec; Field is the JSON key
// ("kind", "c0_f", …), for the caller to prefix with the model's path.
type FieldError struct {
	Field   string
	Message string
}

func (e *FieldError) Error() string { return e.Field + ": " + e.Message }

// FieldErrors are all the problems found, in key order.
type FieldErrors []*FieldError

func (e FieldErrors) Error() string {
	s := ""
	for i, f := range e {
		if i > 0 {
			s += "; "
		}
		s += f.Error()
	}
	return s
}

type specKey struct {
	name string
	val  *float64
	kind int // 0 resistance, 1 capacitance, 2 voltage coefficient
	opt  bool
}

func (s *Spec) keys() (own, foreign []specKey) {
	two := []specKey{
		{"r0_ohm", s.R0Ohm, 0, false}, {"c0_f", s.C0F, 1, false}, {"kv_f_per_v", s.KvFPerV, 2, false},
		{"r2_ohm", s.R2Ohm, 0, false}, {"c2_f", s.C2F, 1, false},
	}
	three := []specKey{
		{"ri_ohm", s.RiOhm, 0, false}, {"ci0_f", s.Ci0F, 1, false}, {"ci1_f_per_v", s.Ci1FPerV, 2, false},
		{"rd_ohm", s.RdOhm, 0, false}, {"cd_f", s.CdF, 1, false}, {"rl_ohm", s.RlOhm, 0, false}, {"cl_f", s.ClF, 1, false},
	}
	leak := specKey{"rleak_ohm", s.RleakOhm, 0, true}
	if s.Kind == KindTwoBranch {
		return append(two, leak), three
	}
	return append(three, leak), two
}

// Validate checks the spec for a cell used up to topV volts (its rating, or
// the highest voltage it will see). Every problem names its key:
// resistances and capacitances must be finite and above zero, voltage
// coefficients finite, and the immediate capacitance C0 + Kv·v above zero
// for every v from 0 to topV (it is linear in v, so both ends are checked).
func (s *Spec) Validate(topV float64) error {
	var errs FieldErrors
	add := func(field, format string, a ...any) {
		errs = append(errs, &FieldError{Field: field, Message: fmt.Sprintf(format, a...)})
	}
	if s.Kind != KindTwoBranch && s.Kind != KindThreeBranch {
		if s.Kind == "" {
			add("kind", "required: %q or %q", KindTwoBranch, KindThreeBranch)
		} else {
			add("kind", "%q is not a model: use %q or %q", s.Kind, KindTwoBranch, KindThreeBranch)
		}
		return errs
	}
	own, foreign := s.keys()
	for _, k := range foreign {
		if k.val != nil {
			add(k.name, "is not a key of a %s model: remove it (or change kind)", s.Kind)
		}
	}
	for _, k := range own {
		if k.val == nil {
			if !k.opt {
				add(k.name, "required for a %s model", s.Kind)
			}
			continue
		}
		v := *k.val
		switch {
		case math.IsNaN(v) || math.IsInf(v, 0):
			add(k.name, "must be a finite number")
		case k.kind == 0 && !(v > 0):
			add(k.name, "must be above 0 Ω (got %g Ω)", v)
		case k.kind == 1 && !(v > 0):
			add(k.name, "must be above 0 F (got %g F)", v)
		}
	}
	if len(errs) > 0 {
		return errs
	}
	var c0, kv float64
	var c0Key, kvKey string
	if s.Kind == KindTwoBranch {
		c0, kv, c0Key, kvKey = *s.C0F, *s.KvFPerV, "c0_f", "kv_f_per_v"
	} else {
		c0, kv, c0Key, kvKey = *s.Ci0F, *s.Ci1FPerV, "ci0_f", "ci1_f_per_v"
	}
	if topV > 0 && !(c0+kv*topV > 0) {
		add(kvKey, "%s + %s·v = %g F at the cell's top voltage %g V: the capacitance must stay above 0 over the whole voltage range; use a smaller negative coefficient", c0Key, kvKey, c0+kv*topV, topV)
	}
	if len(errs) > 0 {
		return errs
	}
	return nil
}

// Model returns the cell's model. Call it only on a spec that passed
// Validate; it panics otherwise.
func (s *Spec) Model() Model {
	if err := s.Validate(0); err != nil {
		panic("cellmodel: Model of an invalid spec: " + err.Error())
	}
	var m Model
	if s.Kind == KindTwoBranch {
		m = Model{RiOhm: *s.R0Ohm, C0F: *s.C0F, KvFPerV: *s.KvFPerV, Slow: []Branch{{ROhm: *s.R2Ohm, CF: *s.C2F}}}
	} else {
		m = Model{RiOhm: *s.RiOhm, C0F: *s.Ci0F, KvFPerV: *s.Ci1FPerV,
			Slow: []Branch{{ROhm: *s.RdOhm, CF: *s.CdF}, {ROhm: *s.RlOhm, CF: *s.ClF}}}
	}
	if s.RleakOhm != nil {
		m.LeakageOhm = *s.RleakOhm
	}
	return m
}
