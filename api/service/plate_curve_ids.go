package service

import (
	"bytes"
	"encoding/json"
	"strconv"
	"strings"

	"sluice/db"
)

// plateQCFailed: the plate was assessed and failed QC; its curves are not
// usable in potency histories by default.
func plateQCFailed(p *db.Plate) bool { return p.Figures != nil && !p.Figures.Pass }

// isRefit tells a refit's curve key ("key#id", unique on the plate) from a
// plate job's own.
func isRefit(key string) bool { return strings.Contains(key, "#") }

// withCurveID puts a plate curve's potency record id, and plate_qc_failed
// when its plate failed QC, at the front of its stored result object,
// keeping the rest byte for byte.
func withCurveID(doc []byte, id string, qcFailed bool) json.RawMessage {
	rest := bytes.TrimPrefix(bytes.TrimSpace(doc), []byte("{"))
	var b bytes.Buffer
	b.WriteString(`{"id":` + strconv.Quote(id))
	if qcFailed {
		b.WriteString(`,"plate_qc_failed":true`)
	}
	if len(bytes.TrimSpace(rest)) > 1 {
		b.WriteByte(',')
	}
	b.Write(rest)
	return b.Bytes()
}
