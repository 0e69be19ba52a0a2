package wire

import (
	"encoding/json"
	"math"
	"testing"
)

func TestNumNaNIsNull(t *testing.T) {
	b, err := json.Marshal([]Num{1.5, Num(math.NaN()), Num(math.Inf(1)), 1e-300})
	if err != nil || string(b) != "[1.5,null,null,1e-300]" {
		t.Fatalf("%s %v", b, err)
	}
	var back []Num
	if err := json.Unmarshal(b, &back); err != nil || back[0] != 1.5 || !math.IsNaN(float64(back[1])) || back[3] != 1e-300 {
		t.Fatalf("%v %v", back, err)
	}
}

func TestParamsKeepOrder(t *testing.T) {
	ps := Params{{Name: "top", Param: Param{Estimate: 2}}, {Name: "bottom", Param: Param{Estimate: 1}}}
	b, err := json.Marshal(ps)
	if err != nil {
		t.Fatal(err)
	}
	if want := `{"top":{"estimate":2,"se":0,"wald_ci":[0,0],"fixed":false,"at_bound":false},"bottom":{"estimate":1,"se":0,"wald_ci":[0,0],"fixed":false,"at_bound":false}}`; string(b) != want {
		t.Fatalf("got  %s\nwant %s", b, want)
	}
	var back Params
	if err := json.Unmarshal(b, &back); err != nil || len(back) != 2 || back[0].Name != "top" || back[1].Estimate != 1 {
		t.Fatalf("%+v %v", back, err)
	}
}
