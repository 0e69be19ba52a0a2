package web

import (
	"net/http"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/gin-gonic/gin"

	"sluice/api/wire"
)

// maxSearch bounds the compound search's text in bytes.
const maxSearch = 100

type compoundsData struct {
	Query     string
	Compounds []wire.CatalogueEntry
	// Total is how many compounds there are before the search.
	Total int
}

// compoundsPage is GET /compounds?q=: the registered compounds, those
// whose id (or name) contains q when it is given, ignoring case.
func (s *Site) compoundsPage(c *gin.Context) {
	q := strings.TrimSpace(c.Query("q"))
	if msg := searchProblem(q); msg != "" {
		s.errorPage(c, http.StatusBadRequest, "The query parameter q "+msg+".")
		return
	}
	all, err := s.svc.Compounds(c.Request.Context())
	if err != nil {
		s.fail(c, err)
		return
	}
	d := compoundsData{Query: q, Total: len(all)}
	needle := strings.ToLower(q)
	for _, e := range all {
		if needle == "" || strings.Contains(strings.ToLower(e.ID), needle) || strings.Contains(strings.ToLower(e.Name), needle) {
			d.Compounds = append(d.Compounds, e)
		}
	}
	s.render(c, http.StatusOK, "compounds", "Compounds", d)
}

// searchProblem says what is wrong with a search text, "" when nothing.
func searchProblem(q string) string {
	switch {
	case len(q) > maxSearch:
		return "is longer than 100 bytes"
	case !utf8.ValidString(q):
		return "is not valid UTF-8"
	case strings.ContainsFunc(q, unicode.IsControl):
		return "contains a control character"
	}
	return ""
}
