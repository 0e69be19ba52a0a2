package main

import (
	"net/http"
	"testing"
)

// checkFormResend: a review form sent twice (a double click, or the
// browser resending it) stores one review: each drawn page's forms carry
// their own idempotency key, and the second send gets the first's answer.
func checkFormResend(t *testing.T, d *demoServer, b *browser, engine string) {
	h := refHistory(t, d)
	id := usableFit(t, h, 2)
	b.visit("/curves/" + id)
	if b.count(`#review-form input[name="key"]`) != 1 {
		t.Fatal("the review form carries no idempotency key")
	}
	// The same form, sent twice with what the page drew.
	statuses := evalAwait[[]int](b, `(async () => {
		const f = new FormData(document.querySelector("#review-form"));
		f.set("decision", "accepted");
		f.set("reason", "looked at twice");
		const body = new URLSearchParams(f).toString();
		const send = () => fetch(location.pathname + "/review", {method: "POST", redirect: "manual",
			headers: {"Content-Type": "application/x-www-form-urlencoded"}, body}).then(r => r.status);
		return [await send(), await send()];
	})()`)
	b.clean("resend")
	// fetch reports a manual redirect (303) as status 0.
	if len(statuses) != 2 || statuses[0] >= http.StatusBadRequest || statuses[1] >= http.StatusBadRequest {
		t.Errorf("the two sends answered %v", statuses)
	}
	var cv apiCurve
	apiGet(t, d, "/v1/curves/"+id, &cv)
	if len(cv.Reviews) != 1 || cv.Reviews[0].Reason != "looked at twice" {
		t.Errorf("after sending one form twice the API has %d reviews: %+v", len(cv.Reviews), cv.Reviews)
	}
	// A new drawing of the page is a new form: its review is stored.
	b.visit("/curves/" + id)
	evalAwait[int](b, `(async () => {
		const f = new FormData(document.querySelector("#review-form"));
		f.set("decision", "accepted");
		f.set("reason", "looked at again");
		return fetch(location.pathname + "/review", {method: "POST", redirect: "manual",
			headers: {"Content-Type": "application/x-www-form-urlencoded"}, body: new URLSearchParams(f).toString()}).then(r => r.status);
	})()`)
	b.clean("second form")
	apiGet(t, d, "/v1/curves/"+id, &cv)
	if len(cv.Reviews) != 2 {
		t.Errorf("a second drawn form's review: the API has %d reviews, want 2", len(cv.Reviews))
	}
}
