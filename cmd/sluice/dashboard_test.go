package main

import (
	"net/http"
	"strings"
	"testing"
)

// dashboardChecks are the page checks, each run against the demo on both
// stores in one signed-in browser; a page's file adds its check here.
var dashboardChecks = []struct {
	name string
	fn   func(t *testing.T, d *demoServer, b *browser, engine string)
}{
	{"overview", checkOverview},
	{"security", checkSecurity},
	// Drift and the membrane-potential calculator (webdrift).
	{"drift", checkDrift},
	{"assay-drift", checkAssayDrift},
	{"potential", checkPotential},
	{"accessibility", checkAccessibility},
	// Curves and compounds (dashboard_curves_test.go).
	{"compounds", checkCompounds},
	{"compound", checkCompound},
	{"curve-review", checkCurveReview},
	{"form-resend", checkFormResend},
	{"curve-refit", checkCurveRefit},
	{"curve-refusals", checkCurveRefusals},
	// Plates and Schild analyses (dashboard_plates_test.go).
	{"plates", checkPlates},
	{"plate", checkPlate},
	{"schild", checkSchild},
	// End of plates and Schild analyses.
}

// TestDashboard serves the demo on each store and walks the dashboard in
// chromium as a person would; any console error or failed sub-request
// fails it, and each page is saved as a screenshot (screenshotDir).
func TestDashboard(t *testing.T) {
	if testing.Short() {
		t.Skip("browser tests run without -short")
	}
	chromiumPath(t)
	for _, engine := range []string{"sqlite", "postgres"} {
		t.Run(engine, func(t *testing.T) {
			d := startDemo(t, engine)
			b := newBrowser(t, d.Base)
			// Signed out, a page sends the browser to the sign-in form
			// and back after it.
			b.visit("/")
			if got := eval[string](b, "location.pathname"); got != "/signin" {
				t.Fatalf("signed out, / shows %s, want /signin", got)
			}
			b.shot(engine + "-signin")
			b.signIn(d.Admin)
			if got := eval[string](b, "location.pathname"); got != "/" {
				t.Fatalf("after sign-in the browser is at %s, want /", got)
			}
			for _, c := range dashboardChecks {
				t.Run(c.name, func(t *testing.T) {
					b.t = t
					c.fn(t, d, b, engine)
				})
			}
		})
	}
}

// checkOverview: the overview lists every demo assay with its drift
// status, the latest plates with their QC verdicts (the demo's failing
// plate among them, with its reason), and links to every section.
func checkOverview(t *testing.T, d *demoServer, b *browser, engine string) {
	b.visit("/")
	b.shot(engine + "-overview")
	if got := b.text("h1"); got != "Overview" {
		t.Errorf("heading %q", got)
	}
	body := b.text("main")
	for _, want := range []string{"lgx7-vm-dye", "Latest plates", "Curves awaiting review"} {
		if !strings.Contains(body, want) {
			t.Errorf("overview lacks %q", want)
		}
	}
	if n := b.count("#main table:nth-of-type(1) tbody tr"); n == 0 {
		t.Errorf("no assay rows")
	}
	// Every listed plate of the demo is assessed: a verdict on each row.
	rows := b.count("#plates-h ~ table tbody tr")
	if pass, fail := b.count("#plates-h ~ table .badge.pass"), b.count("#plates-h ~ table .badge.fail"); rows == 0 || pass+fail != rows {
		t.Errorf("latest plates: %d rows, %d pass and %d fail verdicts", rows, pass, fail)
	}
	for _, href := range []string{"/plates", "/compounds", "/drift", "/potential"} {
		if b.count(`header nav a[href="`+href+`"]`) != 1 {
			t.Errorf("the navigation lacks %s", href)
		}
	}
	if !strings.Contains(strings.ToLower(b.text("footer.caution")), "research use only") {
		t.Errorf("the overview lacks the research-use caution")
	}
}

// checkSecurity: pages carry the security headers; a form POST without
// the session's CSRF token is refused (403, nothing done: the session
// survives); the session cookie is HttpOnly and SameSite=Strict.
func checkSecurity(t *testing.T, d *demoServer, b *browser, engine string) {
	resp, err := http.Get(d.Base + "/signin")
	if err != nil {
		t.Fatal(err)
	}
	resp.Body.Close()
	for h, want := range map[string]string{
		"Content-Security-Policy": "script-src 'self'",
		"X-Content-Type-Options":  "nosniff",
		"Referrer-Policy":         "same-origin",
	} {
		if got := resp.Header.Get(h); !strings.Contains(got, want) {
			t.Errorf("%s = %q, want it to contain %q", h, got, want)
		}
	}
	// The browser's own cookie is invisible to scripts (HttpOnly).
	if got := eval[string](b, "document.cookie"); strings.Contains(got, "sluice_session") {
		t.Errorf("the session cookie is readable by scripts: %q", got)
	}
	// A POST with the session but a wrong CSRF token: sign-out refused.
	status := evalAwait[int](b, `fetch("/signout", {method: "POST", headers: {"Content-Type": "application/x-www-form-urlencoded"},
		body: "csrf=forged", redirect: "manual"}).then(r => r.status)`)
	if status != http.StatusForbidden {
		t.Errorf("sign-out with a forged CSRF token: %d, want 403", status)
	}
	b.forget("/signout") // the refusal asked for
	b.visit("/")
	if got := eval[string](b, "location.pathname"); got != "/" {
		t.Errorf("after a refused forged sign-out the session is gone (at %s)", got)
	}
	b.clean("security")
}
