package form

import (
	"encoding/json"
	"regexp"
	"strconv"
	"strings"
	"unicode"

	"capbank/components/figures"
)

// keyWord matches a design-file key as sizing's messages write one:
// snake_case or dotted, with an optional index ("rated_v", "window.max_v",
// "capacitance_tolerance_pct[0]"). Only the keys keyPhrase knows are
// rewritten; other words ("e.g") stay as they are.
var keyWord = regexp.MustCompile(`\b[a-z][a-z0-9]*(?:[._][a-z0-9]+)+(?:\[\d+\])?`)

// keyPhrases are the words a page uses for a key where its form label
// does not read well inside a sentence.
var keyPhrases = map[string]string{
	"power_w":           "power",
	"current_a":         "current",
	"resistance_ohm":    "resistance",
	"cold_esr_temp_c":   "temperature of the cold ESR factor",
	"rated_life_temp_c": "temperature of the rated life",
	"rated_life_h":      "rated life",
	"min_temp_c":        "lowest operating temperature",
	"max_temp_c":        "highest operating temperature",
	"max_current_a":     "continuous current",
}

// cellKeys are a cell's keys (bare, as sizing names them inside a cell)
// with their fields.
var cellKeys = func() map[string]Field {
	m := map[string]Field{}
	for _, f := range CellFields("") {
		m[f.Name] = f
	}
	return m
}()

// designKeys are the design-wide fields by key.
var designKeys = func() map[string]Field {
	m := map[string]Field{}
	for _, group := range [][]Field{WindowFields, LoadFields, ConditionFields, EOLFields, BalancingFields, LifeFields, BOQFields, PulseFields,
		ChargerFields, ConverterFields, WiringFields, SystemFields, ModuleFields} {
		for _, f := range group {
			m[f.Name] = f
		}
	}
	return m
}()

// Values looks up a figure of the design (or cell) v by its design-file
// path ("window.max_v", "cells[0].rated_v"), for the page's messages.
type Values func(path string) (float64, bool)

// ValuesOf reads the figures of v (a sizing.Design or sizing.Cell) through
// its JSON keys, the paths sizing's messages name.
func ValuesOf(v any) Values {
	b, err := json.Marshal(v)
	var root any
	if err != nil || json.Unmarshal(b, &root) != nil {
		return func(string) (float64, bool) { return 0, false }
	}
	return func(path string) (float64, bool) {
		cur := root
		for part := range strings.SplitSeq(path, ".") {
			name, idx, indexed := strings.Cut(strings.TrimSuffix(part, "]"), "[")
			obj, ok := cur.(map[string]any)
			if !ok {
				return 0, false
			}
			cur = obj[name]
			if indexed {
				i, err := strconv.Atoi(idx)
				list, ok := cur.([]any)
				if err != nil || !ok || i < 0 || i >= len(list) {
					return 0, false
				}
				cur = list[i]
			}
		}
		x, ok := cur.(float64)
		return x, ok
	}
}

// PageMessage is sizing's message about field (a design-file path) as the
// page shows it: every key the message names becomes the words of its
// form label ("must be at least rated_v (2.5 V < 2.7 V)" reads "must be at
// least the rated voltage (2.5 V < 2.7 V)"), followed by its value from
// values when the message does not already quote one there. A key of a
// cell is looked up in the cell field names. API problems keep the keys:
// this is for the page only.
func PageMessage(field, msg string, values Values) string {
	scope := "" // the cell the field belongs to: "cells[2]." or ""
	if m := cellPath.FindStringSubmatch(field); m != nil {
		scope = strings.TrimSuffix(field, m[2]) + "."
	}
	var out strings.Builder
	last := 0
	for _, loc := range keyWord.FindAllStringIndex(msg, -1) {
		key := msg[loc[0]:loc[1]]
		phrase, f, path, ok := keyLabel(key, scope)
		if !ok {
			continue
		}
		out.WriteString(msg[last:loc[0]])
		out.WriteString("the " + phrase)
		if !strings.HasPrefix(msg[loc[1]:], " (") && values != nil {
			if v, ok := values(path); ok && figures.Number(v, 4) != figures.None {
				out.WriteString(" (" + figureOf(v, f.Units.Unit) + ")")
			}
		}
		last = loc[1]
	}
	out.WriteString(msg[last:])
	return out.String()
}

// keyLabel is the phrase, field and full path of a key named in a message
// about a field in scope.
func keyLabel(key, scope string) (phrase string, f Field, path string, ok bool) {
	if f, ok := designKeys[key]; ok {
		return sentenceCase(f.Label), f, key, true
	}
	if f, ok := cellKeys[key]; ok {
		if p, ok := keyPhrases[key]; ok {
			return p, f, scope + key, true
		}
		return sentenceCase(f.Label), f, scope + key, true
	}
	if p, ok := keyPhrases[key]; ok {
		return p, Field{}, scope + key, true
	}
	return "", Field{}, "", false
}

// figureOf writes a value quoted in a message, with the field's unit:
// through figures.SI for the units that take a prefix.
func figureOf(v float64, unit string) string {
	switch unit {
	case "V", "A", "W", "Ω", "F", "s":
		return figures.SI(v, unit, 4)
	case "", "×", "0–1", "each":
		return figures.Number(v, 4)
	}
	return figures.Number(v, 4) + "\u00a0" + unit
}

// sentenceCase lowers a label's first letter for use inside a sentence,
// keeping an acronym ("ESR (DC)") as it is.
func sentenceCase(label string) string {
	r := []rune(label)
	if len(r) > 1 && unicode.IsUpper(r[1]) {
		return label
	}
	if len(r) > 0 {
		r[0] = unicode.ToLower(r[0])
	}
	return string(r)
}
