package wire

// FieldError points at one offending part of a request: a JSON Pointer
// (RFC 6901) into the body, a query parameter, or a row and column of a CSV
// body. It is the errors member of a problem (RFC 9457), shared by the
// handlers and the use cases.
type FieldError struct {
	Pointer   string `json:"pointer,omitempty"`
	Parameter string `json:"parameter,omitempty"`
	Row       int    `json:"row,omitempty"`
	Column    int    `json:"column,omitempty"`
	Detail    string `json:"detail"`
}
