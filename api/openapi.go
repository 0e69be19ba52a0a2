package api

import (
	_ "embed"
	"net/http"

	"github.com/gin-gonic/gin"
)

// openAPIDoc is the OpenAPI 3.1 description of the routes; openapi_test.go
// checks that it lists exactly the routes the router serves.
//
//go:embed openapi.json
var openAPIDoc []byte

func (s *Server) openAPI(c *gin.Context) {
	c.Data(http.StatusOK, "application/json", openAPIDoc)
}
