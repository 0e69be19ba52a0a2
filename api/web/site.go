package web

import (
	"context"
	"embed"
	"fmt"
	"html/template"
	"io/fs"
	"log/slog"
	"net/http"
	"time"

	"github.com/gin-gonic/gin"

	"sluice/api/service"
	"sluice/db"
)

//go:embed templates static
var assets embed.FS

// Config holds the dashboard's settings.
type Config struct {
	// AuthDisabled mirrors the API's: sign-in asks for no token and the
	// session is anonymous with every scope.
	AuthDisabled bool
	// SecureCookies marks the session cookie Secure even on plain HTTP
	// (behind a TLS-terminating proxy); it is Secure anyway under TLS.
	SecureCookies bool
	// IdleTimeout ends a session unused this long; MaxAge ends any
	// session this long after sign-in. Zero means 30 min and 12 h.
	IdleTimeout, MaxAge time.Duration
}

// Store is what the dashboard reads and writes itself: sessions and the
// tokens they are opened with. Everything else goes through the service.
type Store interface {
	db.Transactor
	db.Sessions
	db.Tokens
}

// Deps are the dashboard's collaborators.
type Deps struct {
	Service *service.Service
	Store   Store
	Log     *slog.Logger
	Now     func() time.Time
}

// Site serves the dashboard's pages.
type Site struct {
	cfg   Config
	svc   *service.Service
	store Store
	log   *slog.Logger
	now   func() time.Time
	pages map[string]*template.Template
}

// New parses the templates and builds the site.
func New(cfg Config, d Deps) (*Site, error) {
	if cfg.IdleTimeout == 0 {
		cfg.IdleTimeout = 30 * time.Minute
	}
	if cfg.MaxAge == 0 {
		cfg.MaxAge = 12 * time.Hour
	}
	s := &Site{cfg: cfg, svc: d.Service, store: d.Store, log: d.Log, now: d.Now}
	if s.log == nil {
		s.log = slog.New(slog.DiscardHandler)
	}
	if s.now == nil {
		s.now = func() time.Time { return time.Now().UTC() }
	}
	var err error
	if s.pages, err = parsePages(); err != nil {
		return nil, err
	}
	return s, nil
}

// parsePages parses each page template (templates/*.html but the layout
// and the shared parts) with the layout and parts.html around it.
func parsePages() (map[string]*template.Template, error) {
	names, err := fs.Glob(assets, "templates/*.html")
	if err != nil {
		return nil, err
	}
	pages := map[string]*template.Template{}
	for _, n := range names {
		if n == "templates/layout.html" || n == "templates/parts.html" {
			continue
		}
		t, err := template.New("layout.html").Funcs(funcs).ParseFS(assets, "templates/layout.html", "templates/parts.html", n)
		if err != nil {
			return nil, fmt.Errorf("template %s: %w", n, err)
		}
		pages[n[len("templates/"):len(n)-len(".html")]] = t
	}
	return pages, nil
}

// Register adds the dashboard's routes to r: the static assets and the
// sign-in are open; every page needs a session (and a form POST its CSRF
// token and, to change anything, the submit scope).
func (s *Site) Register(r *gin.Engine) {
	static, _ := fs.Sub(assets, "static")
	r.GET("/static/*file", s.headers, s.static(http.FS(static)))
	open := r.Group("/", s.headers)
	open.GET("/signin", s.signInPage)
	open.POST("/signin", s.signIn)

	pages := r.Group("/", s.headers, s.session)
	pages.POST("/signout", s.csrf, s.signOut)
	pages.GET("/", s.overview)
	s.registerPages(pages)
}

// NotFound answers a path outside the API with the dashboard's 404 page.
func (s *Site) NotFound(c *gin.Context) {
	s.headers(c)
	s.errorPage(c, http.StatusNotFound, "There is no page at "+c.Request.URL.Path+".")
}

// MethodNotAllowed answers a page path asked with the wrong method.
func (s *Site) MethodNotAllowed(c *gin.Context) {
	s.headers(c)
	s.errorPage(c, http.StatusMethodNotAllowed, c.Request.Method+" is not allowed on "+c.Request.URL.Path+".")
}

// Sweep ends expired and idle sessions; the server calls it now and then.
func (s *Site) Sweep(ctx context.Context) (int64, error) {
	now := s.now()
	var n int64
	err := s.store.Write(ctx, func(w db.Writer) error {
		var err error
		n, err = w.DeleteSessionsBefore(ctx, now.Add(-s.cfg.IdleTimeout), now)
		return err
	})
	return n, err
}
