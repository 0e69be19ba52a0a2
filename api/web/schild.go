package web

import (
	"bytes"
	"fmt"
	"html/template"
	"net/http"
	"strconv"
	"time"

	"github.com/gin-gonic/gin"

	"sluice/api/figure"
	"sluice/api/wire"
)

type schildData struct {
	Title        string
	ID           string
	AgonistID    string
	AntagonistID string
	PlateID      string
	CreatedAt    time.Time
	Result       wire.SchildResponse
	// Figure is the API's drawing (GET /v1/schild/{id}/plot.svg),
	// inlined: api/plot escapes every text it writes.
	Figure template.HTML
	Flags  []flagWords
	// Level is the intervals' confidence in percent.
	Level string
}

// flagWords is a flag with what it means.
type flagWords struct{ Flag, Words string }

// schildPage is GET /schild/:id: a stored Schild analysis with its plot,
// pA2 and pKB with their intervals, the slope, the dose ratios and the
// verdict on competition, its flags in words.
func (s *Site) schildPage(c *gin.Context) {
	st, err := s.svc.StoredSchild(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.fail(c, err)
		return
	}
	var buf bytes.Buffer
	if err := figure.Schild(st).Write(&buf); err != nil {
		s.fail(c, fmt.Errorf("Schild plot of %s: %w", st.Run.ID, err))
		return
	}
	d := schildData{Title: figure.SchildTitle(st.Run.AgonistID, st.Run.AntagonistID), ID: st.Run.ID, AgonistID: st.Run.AgonistID,
		AntagonistID: st.Run.AntagonistID, PlateID: st.Run.PlateID, CreatedAt: st.Run.CreatedAt, Result: st.Result,
		Figure: template.HTML(buf.String())} // api/plot escapes every text it writes
	d.Level = strconv.FormatFloat(100*st.Result.Confidence, 'g', 4, 64)
	for _, f := range st.Result.Flags {
		d.Flags = append(d.Flags, flagWords{f, wire.SchildFlagWords(f)})
	}
	s.renderCaution(c, http.StatusOK, "schild", "Schild analysis "+d.Title, d)
}
