package main

import (
	"bytes"
	"encoding/json"
	"strings"
	"testing"

	"sluice/api/wire"
)

// An inactive curve has no potency and no interval: the summary shows
// dashes, never "[NaN, NaN]".
func TestSummaryInactiveCurve(t *testing.T) {
	v := &wire.PlateView{PlateID: "p", Barcode: "b", Status: "done", Curves: []json.RawMessage{
		json.RawMessage(`{"key":"demo-screen-07","compound_id":"demo-screen-07","status":"converged","activity":"inactive","pec50":null,"ec50":{"estimate":null,"ci":[null,null]},"flags":["no_response"]}`),
	}}
	var out bytes.Buffer
	printSummary(&out, v)
	if s := out.String(); strings.Contains(s, "NaN") || !strings.Contains(s, "inactive") {
		t.Errorf("summary:\n%s", s)
	}
}
