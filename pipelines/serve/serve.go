// Package serve is `swellgrid serve DIR`: a local, read-only web server
// that shows a finished run as an interactive map (a layer for each numeric
// column of cells.parquet in the report's colours, the contour layers, the
// sites and the validation stations, a coastline) and opens the page of any
// cell, built on demand by the report's site-page builder.
//
// It reads the run directory through export/rundir (proved once against
// the manifest's checksums at start) and draws with export/report: it
// computes no statistics, draws no figure of its own and never writes into
// the run directory. The map library (OpenLayers) and the coastline
// (Natural Earth, public domain) are embedded (assets/vendor, see
// DEVELOPERS.md), so the page needs no network.
package serve

import (
	"context"
	"embed"
	"errors"
	"fmt"
	"html/template"
	"io/fs"
	"net"
	"net/http"
	"net/url"
	"os"
	"path"
	"strconv"
	"strings"
	"sync"
	"time"

	"swellgrid/export/report"
	"swellgrid/export/rundir"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/runspec"
)

//go:embed assets
var assets embed.FS

// DefaultAddr is where serve listens unless told otherwise: the loopback
// interface only.
const DefaultAddr = "127.0.0.1:8765"

// Options of Serve.
type Options struct {
	// Addr is host:port to listen on (DefaultAddr if empty; port 0 picks a
	// free port). A host that is not a loopback address is refused unless
	// AllowRemote is set.
	Addr        string
	AllowRemote bool
	// Ready, if set, is called with the page's URL once the server listens.
	Ready func(url string)
}

// CheckAddr refuses an address that would expose the server beyond this
// machine: an empty host (every interface), a host name other than
// "localhost", or an IP address that is not loopback, unless allowRemote.
func CheckAddr(addr string, allowRemote bool) error {
	host, _, err := net.SplitHostPort(addr)
	if err != nil {
		return fmt.Errorf("serve: --addr %q is not host:port (for example %s): %w", addr, DefaultAddr, err)
	}
	if allowRemote {
		return nil
	}
	if host == "localhost" {
		return nil
	}
	if ip := net.ParseIP(host); ip != nil && ip.IsLoopback() {
		return nil
	}
	what := "host " + strconv.Quote(host)
	if host == "" {
		what = "every interface (no host)"
	}
	return fmt.Errorf("serve: --addr %s listens on %s, not only on this machine; serve is meant for local use (127.0.0.1 or localhost): give --allow-remote to expose the atlas on the network deliberately", addr, what)
}

// Server serves one finished run directory.
type Server struct {
	run   *rundir.Run
	mu    sync.Mutex // guards run's table reads (rundir.Run is not safe for concurrent use)
	root  *os.Root   // the run directory: no path leaves it
	atlas []byte     // api/atlas.json
	bins  map[string][]byte
	index []byte
	pages pageCache
}

// New opens the finished run in dir, proves every file its manifest seals
// (rundir.Run.VerifyAll: once, here, not per request) and prepares the
// map's data.
func New(dir string) (*Server, error) {
	r, err := rundir.Open(dir, nil)
	if err != nil {
		return nil, err
	}
	if err := r.VerifyAll(); err != nil {
		return nil, err
	}
	root, err := os.OpenRoot(dir)
	if err != nil {
		return nil, fmt.Errorf("serve: %w", err)
	}
	s := &Server{run: r, root: root, pages: pageCache{max: 16}}
	if err := s.prepare(); err != nil {
		root.Close()
		return nil, err
	}
	// the long tables' footers (every row group's cell range), parsed once
	// while the map loads rather than by the first cell page; an error
	// comes back to the page that reads the table
	s.mu.Lock()
	go func() {
		defer s.mu.Unlock()
		s.run.ReadFooters(runspec.LongTableNames...)
	}()
	return s, nil
}

// Close releases the run directory.
func (s *Server) Close() error { return s.root.Close() }

// Warnings are what the run was read with without proof (an earlier
// version's manifest without checksums).
func (s *Server) Warnings() []string { return s.run.Warnings }

// Handler is the server's HTTP handler: GET and HEAD only, and no request
// path that could leave the run directory.
func (s *Server) Handler() http.Handler {
	mux := http.NewServeMux()
	mux.HandleFunc("GET /{$}", s.serveIndex)
	sub, _ := fs.Sub(assets, "assets") // a literal name of the embedded tree: no error
	mux.Handle("GET /assets/", http.StripPrefix("/assets/", http.FileServerFS(sub)))
	mux.HandleFunc("GET /api/atlas.json", func(w http.ResponseWriter, r *http.Request) {
		send(w, "application/json", s.atlas)
	})
	mux.HandleFunc("GET /api/{name}", s.serveBin)
	mux.HandleFunc("GET /api/layer/{column}", s.serveLayer)
	mux.HandleFunc("GET /api/nearest", s.serveNearest)
	mux.HandleFunc("GET /cell/{id}/{$}", s.serveCellPage)
	mux.HandleFunc("GET /cell/{id}/{file}", s.serveCellFile)
	mux.HandleFunc("GET /run/", s.serveRunFile)
	return guard(mux)
}

// guard refuses what a read-only viewer of one directory never needs:
// methods other than GET and HEAD, and paths with a ".." segment, a
// backslash, a NUL or an empty segment, raw or percent-encoded (400; the
// mux would otherwise redirect a cleaned path).
func guard(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if r.Method != http.MethodGet && r.Method != http.MethodHead {
			w.Header().Set("Allow", "GET, HEAD")
			http.Error(w, "serve is read-only: GET and HEAD only", http.StatusMethodNotAllowed)
			return
		}
		if !safePath(r.URL.Path) || !safePath(r.URL.EscapedPath()) {
			http.Error(w, "request path refused: it would leave the run directory", http.StatusBadRequest)
			return
		}
		w.Header().Set("X-Content-Type-Options", "nosniff")
		next.ServeHTTP(w, r)
	})
}

// safePath reports whether the request path p (decoded or not) is a plain
// absolute path of named segments.
func safePath(p string) bool {
	if !strings.HasPrefix(p, "/") || strings.ContainsAny(p, "\\\x00") {
		return false
	}
	if dec, err := url.PathUnescape(p); err != nil || dec != p && !safePath(dec) {
		return false
	}
	segs := strings.Split(p[1:], "/")
	for k, seg := range segs {
		if seg == ".." || seg == "." || seg == "" && k != len(segs)-1 {
			return false
		}
	}
	return true
}

func send(w http.ResponseWriter, ctype string, b []byte) {
	w.Header().Set("Content-Type", ctype)
	w.Header().Set("Content-Length", strconv.Itoa(len(b)))
	w.Write(b)
}

func (s *Server) serveIndex(w http.ResponseWriter, r *http.Request) {
	send(w, "text/html; charset=utf-8", s.index)
}

func (s *Server) serveBin(w http.ResponseWriter, r *http.Request) {
	b, ok := s.bins[r.PathValue("name")]
	if !ok {
		http.NotFound(w, r)
		return
	}
	send(w, "application/octet-stream", b)
}

func (s *Server) serveLayer(w http.ResponseWriter, r *http.Request) {
	name, ok := strings.CutSuffix(r.PathValue("column"), ".bin")
	if !ok {
		http.NotFound(w, r)
		return
	}
	b, ok := s.layerBin(name)
	if !ok {
		http.NotFound(w, r)
		return
	}
	send(w, "application/octet-stream", b)
}

func (s *Server) serveNearest(w http.ResponseWriter, r *http.Request) {
	lon, err1 := strconv.ParseFloat(r.URL.Query().Get("lon"), 64)
	lat, err2 := strconv.ParseFloat(r.URL.Query().Get("lat"), 64)
	if err1 != nil || err2 != nil || lat < -90 || lat > 90 || lon < -360 || lon > 360 {
		http.Error(w, "give lon (degrees east) and lat (degrees north, -90 to 90) as numbers", http.StatusBadRequest)
		return
	}
	if lon >= 180 {
		lon -= 360
	}
	c, d := s.run.NearestSeaCell(lon, lat)
	if c < 0 {
		http.Error(w, "the run has no sea cell with a result", http.StatusNotFound)
		return
	}
	send(w, "application/json", fmt.Appendf(nil, `{"cell":%d,"lon":%s,"lat":%s,"distance_km":%s}`,
		c, jsonNum(s.run.Lon()[c]), jsonNum(s.run.Lat()[c]), jsonNum(d)))
}

func (s *Server) cellOf(w http.ResponseWriter, r *http.Request) (int, bool) {
	id, err := strconv.Atoi(r.PathValue("id"))
	if err != nil || id < 0 || id >= s.run.Cells.Rows {
		http.Error(w, fmt.Sprintf("no such cell: cells are numbered 0 to %d", s.run.Cells.Rows-1), http.StatusNotFound)
		return 0, false
	}
	return id, true
}

// page returns the page of cell, from the cache or built now.
func (s *Server) page(cell int) (*report.CellPage, error) {
	if p := s.pages.get(cell); p != nil {
		return p, nil
	}
	s.mu.Lock()
	p, err := report.BuildCellPage(s.run, cell)
	s.mu.Unlock()
	if err != nil {
		return nil, err
	}
	s.pages.put(p)
	return p, nil
}

func (s *Server) serveCellPage(w http.ResponseWriter, r *http.Request) {
	id, ok := s.cellOf(w, r)
	if !ok {
		return
	}
	p, err := s.page(id)
	if err != nil {
		http.Error(w, err.Error(), http.StatusInternalServerError)
		return
	}
	send(w, "text/html; charset=utf-8", p.HTML)
}

func (s *Server) serveCellFile(w http.ResponseWriter, r *http.Request) {
	id, ok := s.cellOf(w, r)
	if !ok {
		return
	}
	name := r.PathValue("file")
	if name == "index.html" { // the site page's link to the atlas
		http.Redirect(w, r, "/", http.StatusSeeOther)
		return
	}
	p, err := s.page(id)
	if err != nil {
		http.Error(w, err.Error(), http.StatusInternalServerError)
		return
	}
	b, ok, err := p.File(name)
	switch {
	case !ok:
		http.NotFound(w, r)
	case err != nil:
		http.Error(w, err.Error(), http.StatusInternalServerError)
	case strings.HasSuffix(name, ".svg"):
		send(w, "image/svg+xml", b)
	default:
		send(w, "image/png", b)
	}
}

// serveRunFile serves a file of the run directory (the contour layers,
// validation.json): through os.Root, so that no path, link or ".." leaves
// the directory; hidden files and the state folder are not served.
func (s *Server) serveRunFile(w http.ResponseWriter, r *http.Request) {
	rel := strings.TrimPrefix(r.URL.Path, "/run/")
	for _, seg := range strings.Split(rel, "/") {
		if seg == "" || strings.HasPrefix(seg, ".") {
			http.NotFound(w, r)
			return
		}
	}
	f, err := s.root.Open(rel)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			http.NotFound(w, r)
		} else {
			http.Error(w, "refused: "+path.Base(rel)+" is not a file of the run directory", http.StatusForbidden)
		}
		return
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil || !st.Mode().IsRegular() {
		http.Error(w, "refused: not a regular file of the run directory", http.StatusForbidden)
		return
	}
	if strings.HasSuffix(rel, ".geojson") {
		w.Header().Set("Content-Type", "application/geo+json")
	}
	http.ServeContent(w, r, path.Base(rel), st.ModTime(), f)
}

// pageCache keeps the last max cell pages (their rendered figures with them).
type pageCache struct {
	mu    sync.Mutex
	max   int
	order []*report.CellPage
}

func (c *pageCache) get(cell int) *report.CellPage {
	c.mu.Lock()
	defer c.mu.Unlock()
	for _, p := range c.order {
		if p.Cell == cell {
			return p
		}
	}
	return nil
}

func (c *pageCache) put(p *report.CellPage) {
	c.mu.Lock()
	defer c.mu.Unlock()
	c.order = append(c.order, p)
	if len(c.order) > c.max {
		c.order = c.order[1:]
	}
}

// Serve serves dir at opt.Addr until ctx ends.
func Serve(ctx context.Context, dir string, opt Options) error {
	if opt.Addr == "" {
		opt.Addr = DefaultAddr
	}
	if err := CheckAddr(opt.Addr, opt.AllowRemote); err != nil {
		return err
	}
	s, err := New(dir)
	if err != nil {
		return fault.Input(err) // not a finished run, or a damaged file: bad input
	}
	defer s.Close()
	ln, err := net.Listen("tcp", opt.Addr)
	if err != nil {
		return fmt.Errorf("serve: cannot listen on %s (%v); give another --addr, such as 127.0.0.1:0 for any free port", opt.Addr, err)
	}
	srv := &http.Server{Handler: s.Handler(), ReadHeaderTimeout: 10 * time.Second}
	if opt.Ready != nil {
		opt.Ready("http://" + ln.Addr().String() + "/")
	}
	errc := make(chan error, 1)
	go func() { errc <- srv.Serve(ln) }()
	select {
	case <-ctx.Done():
		sctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
		defer cancel()
		srv.Shutdown(sctx)
		return nil
	case err := <-errc:
		return err
	}
}

var indexPage = template.Must(template.New("index").Parse(`<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><title>{{.Title}}</title>
<link rel="stylesheet" href="assets/vendor/ol/ol.css"><link rel="stylesheet" href="assets/app.css">
</head><body>
<div id="side">
<h1>{{.Title}}</h1>
<p class="run">{{.Dir}}</p>
{{if .Synthetic}}<p class="synthetic">{{.Synthetic}}</p>{{end}}
<label for="layer">Layer</label> <select id="layer"></select>
<div id="legend"></div>
<fieldset id="overlays"><legend>Overlays</legend><div id="contours"></div>
<label><input type="checkbox" id="show-sites" checked> sites and stations</label></fieldset>
<form id="search"><label>Go to lon <input id="lon" size="8" inputmode="decimal"></label>
<label>lat <input id="lat" size="8" inputmode="decimal"></label> <button type="submit">find cell</button></form>
<p id="found"></p>
<div class="caution"><strong>Caution.</strong> {{.Caution}}</div>
<p class="about">Map: OpenLayers; coastline: Natural Earth (public domain). Click a cell to open its page.</p>
</div>
<div id="map"><div id="hover"></div></div>
<div id="panel" hidden><div class="bar"><a id="panel-open" target="_blank" href="#">open in its own tab</a> <button id="panel-close" type="button">close</button></div>
<iframe id="cellpage" title="cell page"></iframe></div>
<script src="assets/vendor/ol/ol.js"></script><script src="assets/app.js"></script>
</body></html>
`))
