package api

import (
	"sluice/api/service"

	"errors"
	"testing"
)

func TestDecodeJSONPointers(t *testing.T) {
	type point struct {
		Conc float64 `json:"conc"`
	}
	type req struct {
		Model  string             `json:"model"`
		Points []point            `json:"points"`
		Fixed  map[string]float64 `json:"fixed"`
	}
	cases := []struct {
		body, pointer string
		kind          error
	}{
		{`{"points":[{"conc":1},{"conc":"x"}]}`, "/points/1/conc", errInvalid},
		{`{"model":"hill","points":[{"conc":1},{"conc":2},{"conc":1e999}]}`, "/points/2/conc", errInvalid},
		{`{"fixed":{"top":100,"bottom":"zero"}}`, "/fixed/bottom", errInvalid},
		{`{"model":"hill","pts":[]}`, "/pts", errInvalid},
		{`{"points":[{"conc":1,"dose":2}]}`, "/points/0/dose", errInvalid},
		{`{"model":`, "", errBadRequest},
		{`{"model":"hill"} {}`, "", errBadRequest},
		{``, "", errBadRequest},
	}
	for _, c := range cases {
		var r req
		err := decodeJSON([]byte(c.body), &r)
		if !errors.Is(err, c.kind) {
			t.Errorf("%s: %v, want kind %v", c.body, err, c.kind)
			continue
		}
		var re *service.Error
		errors.As(err, &re)
		got := ""
		if len(re.Fields) > 0 {
			got = re.Fields[0].Pointer
		}
		if got != c.pointer {
			t.Errorf("%s: pointer %q, want %q (%v)", c.body, got, c.pointer, err)
		}
	}
}
