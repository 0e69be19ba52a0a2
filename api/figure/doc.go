// Package figure turns Sluice's views (api/wire objects and the service's
// read models) into api/plot figures. It is the one mapping from a view to
// its drawing, shared by the API's .svg routes and the dashboard's pages,
// so that a figure in the browser and a figure from the API are the same
// drawing.
package figure
