package report

import (
	"bytes"
	"encoding/json"
	"fmt"
)

// An interpolation chain's report.json says what its figures are: its
// rejection is of images, its counts are per input sample (the channel
// side, as a decimation chain's are per output sample), and each stage's
// factor is its interpolation. The Go fields keep one name for both
// directions; MarshalJSON writes these keys instead, in the same places,
// and UnmarshalJSON reads them back.
var (
	interpChainKeys = map[string]string{
		"multiplies_per_output":        "multiplies_per_input",
		"adds_per_output":              "adds_per_input",
		"alias_rejection_db":           "image_rejection_db",
		"worst_alias_hz":               "worst_image_hz",
		"worst_alias_path":             "worst_image_path",
		"worst_alias_output_hz":        "worst_image_channel_hz",
		"quantised_alias_rejection_db": "quantised_image_rejection_db",
		"bittrue_alias_hz":             "bittrue_image_hz",
		"bittrue_alias_rejection_db":   "bittrue_image_rejection_db",
		"quantised_alias_response_db":  "quantised_image_response_db",
		"bittrue_alias_valid":          "bittrue_image_valid",
	}
	interpStageKeys = map[string]string{
		"decimation":            "interpolation",
		"multiplies_per_output": "multiplies_per_input",
		"adds_per_output":       "adds_per_input",
	}
	// interpFractionalKeys are an interpolation chain's fractional
	// stage's: it keeps both interpolation and decimation, L and M.
	interpFractionalKeys = map[string]string{
		"multiplies_per_output": "multiplies_per_input",
		"adds_per_output":       "adds_per_input",
	}
)

// InterpolationKey returns the key an interpolation chain's report.json
// writes for a decimation chain's key k (image_rejection_db for
// alias_rejection_db, multiplies_per_input for multiplies_per_output,
// ...), or k when the two directions share it: the one list of those
// names, which the sweep's files follow.
func InterpolationKey(k string) string {
	if n, ok := interpChainKeys[k]; ok {
		return n
	}
	return k
}

// MarshalJSON writes the chain, with the keys of an interpolation chain
// renamed (interpChainKeys).
func (c Chain) MarshalJSON() ([]byte, error) {
	type plain Chain
	b, err := marshal(plain(c))
	if err != nil || !c.interp {
		return b, err
	}
	return renameKeys(b, interpChainKeys)
}

// UnmarshalJSON reads a chain of either direction.
func (c *Chain) UnmarshalJSON(b []byte) error {
	type plain Chain
	b, interp, err := restoreKeys(b, interpChainKeys, "image_rejection_db")
	if err != nil {
		return err
	}
	if err := json.Unmarshal(b, (*plain)(c)); err != nil {
		return err
	}
	c.interp = interp
	return nil
}

// MarshalJSON writes the stage, with the keys of an interpolation chain's
// stage renamed (interpStageKeys).
func (s Stage) MarshalJSON() ([]byte, error) {
	type plain Stage
	b, err := marshal(plain(s))
	if err != nil || !s.interp {
		return b, err
	}
	if s.Kind == "polyphase" || s.Kind == "farrow" {
		return renameKeys(b, interpFractionalKeys)
	}
	return renameKeys(b, interpStageKeys)
}

// UnmarshalJSON reads a stage of either direction. A fractional stage
// holds both interpolation and decimation, L and M, in either.
func (s *Stage) UnmarshalJSON(b []byte) error {
	type plain Stage
	var keys map[string]json.RawMessage
	if err := json.Unmarshal(b, &keys); err != nil {
		return err
	}
	if _, both := keys["decimation"]; both {
		// A fractional stage: an interpolation chain's says so by its
		// counts per input.
		b, interp, err := restoreKeys(b, interpFractionalKeys, "multiplies_per_input")
		if err != nil {
			return err
		}
		if err := json.Unmarshal(b, (*plain)(s)); err != nil {
			return err
		}
		s.interp = interp
		return nil
	}
	b, interp, err := restoreKeys(b, interpStageKeys, "interpolation")
	if err != nil {
		return err
	}
	if err := json.Unmarshal(b, (*plain)(s)); err != nil {
		return err
	}
	s.interp = interp
	return nil
}

// marshal is json.Marshal without the escaping of <, > and &, as Report.Marshal
// writes the rest of report.json (a chain's notation holds " > ").
func marshal(v any) ([]byte, error) {
	var buf bytes.Buffer
	enc := json.NewEncoder(&buf)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(v); err != nil {
		return nil, err
	}
	return bytes.TrimRight(buf.Bytes(), "\n"), nil
}

// renameKeys rewrites the JSON object b with each top-level key found in
// names replaced by its value, keeping the order of the keys and the bytes
// of the values.
func renameKeys(b []byte, names map[string]string) ([]byte, error) {
	dec := json.NewDecoder(bytes.NewReader(b))
	if t, err := dec.Token(); err != nil || t != json.Delim('{') {
		return nil, fmt.Errorf("report: not a JSON object")
	}
	var out bytes.Buffer
	out.WriteByte('{')
	for dec.More() {
		t, err := dec.Token()
		if err != nil {
			return nil, err
		}
		key, _ := t.(string)
		var v json.RawMessage
		if err := dec.Decode(&v); err != nil {
			return nil, err
		}
		if n, ok := names[key]; ok {
			key = n
		}
		if out.Len() > 1 {
			out.WriteByte(',')
		}
		k, _ := json.Marshal(key)
		out.Write(k)
		out.WriteByte(':')
		out.Write(v)
	}
	out.WriteByte('}')
	return out.Bytes(), nil
}

// restoreKeys undoes renameKeys when the object b holds the key marker, the
// sign of an interpolation chain's object, and says whether it did.
func restoreKeys(b []byte, names map[string]string, marker string) ([]byte, bool, error) {
	var m map[string]json.RawMessage
	if err := json.Unmarshal(b, &m); err != nil {
		return nil, false, err
	}
	if _, ok := m[marker]; !ok {
		return b, false, nil
	}
	back := make(map[string]string, len(names))
	for k, v := range names {
		back[v] = k
	}
	r, err := renameKeys(b, back)
	return r, true, err
}
