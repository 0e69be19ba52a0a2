package web

import (
	"fmt"
	"html/template"
	"math"
	"strconv"
	"strings"
	"time"

	"sluice/api/wire"
)

// funcs are the templates' formatting helpers: numbers with sensible
// significant digits and units, dates the browser shows in the viewer's
// locale (static/site.js; UTC without JavaScript).
var funcs = template.FuncMap{
	"conc":    conc,
	"pec":     pec,
	"pecq":    pecq,
	"sig":     sig,
	"when":    when,
	"day":     day,
	"caution": func() string { return wire.Caution },
	"join":    strings.Join,
	"inc":     func(i int) int { return i + 1 },
}

// float reads the numeric types views carry; NaN for anything else or nil.
func float(v any) float64 {
	switch x := v.(type) {
	case float64:
		return x
	case wire.Num:
		return float64(x)
	case *wire.Num:
		if x != nil {
			return float64(*x)
		}
	case *float64:
		if x != nil {
			return *x
		}
	case int:
		return float64(x)
	}
	return math.NaN()
}

// concUnits are the units a molar concentration is shown in: the largest
// that keeps the number at or above 1.
var concUnits = []struct {
	name  string
	molar float64
}{{"M", 1}, {"mM", 1e-3}, {"µM", 1e-6}, {"nM", 1e-9}, {"pM", 1e-12}, {"fM", 1e-15}}

// conc shows a molar concentration with three significant figures in the
// unit that suits it (1.23 µM, 45.6 nM); "—" when there is none.
func conc(v any) string {
	m := float(v)
	if math.IsNaN(m) || math.IsInf(m, 0) || m < 0 {
		return "—"
	}
	if m == 0 {
		return "0"
	}
	u := concUnits[len(concUnits)-1]
	for _, c := range concUnits {
		if m >= c.molar*(1-5e-4) {
			u = c
			break
		}
	}
	return sig(m/u.molar) + " " + u.name
}

// pec shows a pEC50 (or any log potency) to two decimals.
func pec(v any) string {
	x := float(v)
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "—"
	}
	return strconv.FormatFloat(x, 'f', 2, 64)
}

// pecq shows a pEC50 with its EC50's qualifier turned round: an EC50
// above the tested range (">") is a pEC50 below the shown value.
func pecq(qualifier string, v any) string {
	switch qualifier {
	case ">":
		return "< " + pec(v)
	case "<":
		return "> " + pec(v)
	}
	return pec(v)
}

// sig shows a number to three significant figures (whole numbers from 100
// up) without an exponent between 1e-3 and 1e6.
func sig(v any) string {
	x := float(v)
	switch {
	case math.IsNaN(x):
		return "—"
	case math.IsInf(x, 1):
		return "∞"
	case math.IsInf(x, -1):
		return "−∞"
	case x == 0:
		return "0"
	}
	// Round to three significant figures first, so that 0.9999 is 1.00.
	if math.Abs(x) < 100 {
		x, _ = strconv.ParseFloat(strconv.FormatFloat(x, 'e', 2, 64), 64)
	}
	a := math.Abs(x)
	if a < 1e-3 || a >= 1e6 {
		return strings.Replace(strconv.FormatFloat(x, 'e', 2, 64), "-", "−", 1)
	}
	dec := max(0, 2-int(math.Floor(math.Log10(a))))
	s := strconv.FormatFloat(x, 'f', dec, 64)
	if strings.HasPrefix(s, "-") {
		s = "−" + s[1:]
	}
	return s
}

// when shows an RFC 3339 time as a <time> element: UTC text that
// static/site.js rewrites in the viewer's locale.
func when(v any) template.HTML {
	t, ok := asTime(v)
	if !ok {
		return "—"
	}
	return template.HTML(fmt.Sprintf(`<time datetime="%s">%s</time>`, t.Format(time.RFC3339), t.Format("2006-01-02 15:04 UTC")))
}

// day is when's date-only form.
func day(v any) template.HTML {
	t, ok := asTime(v)
	if !ok {
		return "—"
	}
	return template.HTML(fmt.Sprintf(`<time datetime="%s" data-date>%s</time>`, t.Format(time.RFC3339), t.Format("2006-01-02")))
}

func asTime(v any) (time.Time, bool) {
	switch x := v.(type) {
	case time.Time:
		return x.UTC(), !x.IsZero()
	case *time.Time:
		if x != nil {
			return x.UTC(), true
		}
	case string:
		t, err := time.Parse(time.RFC3339Nano, x)
		return t.UTC(), err == nil
	}
	return time.Time{}, false
}
