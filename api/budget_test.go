package api

import (
	"fmt"
	"strings"
	"testing"

	"sluice/db/dbtest"
)

// A request over the hard work limit is a 422 naming the field that drives
// its cost, answered before any fitting (2 000 levels with B = 100 000 is
// about 6.5e9 units, hours of CPU).
func TestTooMuchWork(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	var pts []string
	for i := range 2000 {
		pts = append(pts, fmt.Sprintf(`{"conc":%d,"response":%d}`, i+1, i%7))
	}
	w := ts.do("POST", "/v1/fits", ScopeSubmit, `{"points":[`+strings.Join(pts, ",")+`],"bootstrap":{"resamples":100000}}`)
	p := problemOf(t, w)
	if w.Code != 422 || len(p.Errors) != 1 || p.Errors[0].Pointer != "/bootstrap/resamples" {
		t.Errorf("%d %+v", w.Code, p)
	}
	if n := ts.runs(); n != 0 {
		t.Errorf("%d runs stored", n)
	}
}
