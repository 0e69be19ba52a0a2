// Package web is Sluice's dashboard: server-rendered pages from
// html/template and static assets embedded in the binary, behind a
// sign-in that turns an API token into a server-side session.
//
// Pages are handlers like the API's: they read the request, call the
// use cases in api/service and render a template; figures come from
// api/figure, so a figure in the browser is the API's drawing. Every form
// POST carries the session's CSRF token; a session's scope is its token's
// and limits what the pages offer and accept. Pages work without
// JavaScript; static/site.js only enhances them (local dates, sorting).
package web
