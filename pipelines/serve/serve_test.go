package serve

import (
	"bufio"
	"fmt"
	"io"
	"net"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Binding: only loopback addresses unless remote access is asked for
// (127.0.0.0/8 and ::1 are loopback: RFC 1122 section 3.2.1.3, RFC 4291
// section 2.5.3).
func TestCheckAddr(t *testing.T) {
	for addr, ok := range map[string]bool{
		"127.0.0.1:8765": true, "127.0.0.1:0": true, "[::1]:80": true, "localhost:9000": true, "127.1.2.3:1": true,
		":8765": false, "0.0.0.0:8765": false, "[::]:8765": false, "192.168.1.10:80": false, "10.0.0.1:8080": false,
		"example.invalid:80": false, "[2001:db8::1]:80": false, "127.0.0.1": false, "": false,
	} {
		err := CheckAddr(addr, false)
		if (err == nil) != ok {
			t.Errorf("CheckAddr(%q, false) = %v, want allowed=%v", addr, err, ok)
		}
		if err != nil && !strings.Contains(err.Error(), "--allow-remote") && strings.Contains(addr, ":") && addr != "127.0.0.1" {
			t.Errorf("CheckAddr(%q): the refusal does not say how to allow it: %v", addr, err)
		}
	}
	if err := CheckAddr("0.0.0.0:8765", true); err != nil {
		t.Errorf("--allow-remote still refuses 0.0.0.0: %v", err)
	}
	// Serve refuses before opening anything: the directory does not exist,
	// and the error is the address's, not the directory's.
	err := Serve(t.Context(), filepath.Join(t.TempDir(), "none"), Options{Addr: "0.0.0.0:0"})
	if err == nil || !strings.Contains(err.Error(), "every interface") && !strings.Contains(err.Error(), "not only on this machine") {
		t.Errorf("Serve on 0.0.0.0: %v, want a refusal of the address", err)
	}
}

// rawGet sends one request line as written (no client-side cleaning of the
// path) and returns the status code.
func rawGet(t *testing.T, addr, target string) int {
	t.Helper()
	c, err := net.Dial("tcp", addr)
	if err != nil {
		t.Fatal(err)
	}
	defer c.Close()
	fmt.Fprintf(c, "GET %s HTTP/1.1\r\nHost: %s\r\nConnection: close\r\n\r\n", target, addr)
	resp, err := http.ReadResponse(bufio.NewReader(c), nil)
	if err != nil {
		t.Fatalf("GET %s: %v", target, err)
	}
	io.Copy(io.Discard, resp.Body)
	resp.Body.Close()
	return resp.StatusCode
}

// No request path leaves the run directory: "..", its percent-encodings,
// absolute paths, links planted in the directory, hidden files; and the
// server is read-only (no method but GET and HEAD).
func TestPathTraversalRefused(t *testing.T) {
	base := t.TempDir()
	dir := filepath.Join(base, "run")
	os.MkdirAll(filepath.Join(dir, "contours"), 0o755)
	os.MkdirAll(filepath.Join(dir, ".swellgrid"), 0o755)
	secret := filepath.Join(base, "secret.txt")
	os.WriteFile(secret, []byte("outside"), 0o644)
	os.WriteFile(filepath.Join(dir, "contours", "a.geojson"), []byte(`{"type":"FeatureCollection","features":[]}`), 0o644)
	os.WriteFile(filepath.Join(dir, ".swellgrid", "lock"), []byte("x"), 0o644)
	os.Symlink(secret, filepath.Join(dir, "contours", "link.geojson"))
	os.Symlink(base, filepath.Join(dir, "up"))
	root, err := os.OpenRoot(dir)
	if err != nil {
		t.Fatal(err)
	}
	defer root.Close()
	s := &Server{root: root}
	ts := httptest.NewServer(s.Handler())
	defer ts.Close()
	addr := strings.TrimPrefix(ts.URL, "http://")
	if got := rawGet(t, addr, "/run/contours/a.geojson"); got != 200 {
		t.Fatalf("a file of the run directory: status %d, want 200 (the refusals below would prove nothing)", got)
	}
	for _, target := range []string{
		"/run/../secret.txt", "/../secret.txt", "/run/contours/../../secret.txt",
		"/run/%2e%2e/secret.txt", "/run/%2E%2E/secret.txt", "/run/contours/%2e%2e%2f%2e%2e%2fsecret.txt",
		"/run/..%2fsecret.txt", "/run/%2fetc%2fpasswd", "/run//etc/passwd", "/run/" + secret,
		"/run/contours/link.geojson", "/run/up/secret.txt", "/run/.swellgrid/lock", "/run/contours/",
		"/run/contours\\..\\..\\secret.txt", "/run/%5c..%5csecret.txt", "/assets/../serve.go", "/assets/%2e%2e/serve.go",
		"/etc/passwd", "/cell/0/../../secret.txt",
	} {
		got := rawGet(t, addr, target)
		if got < 400 || got > 499 {
			t.Errorf("GET %s: status %d, want 4xx", target, got)
		}
	}
	for _, m := range []string{"POST", "PUT", "DELETE"} {
		req, _ := http.NewRequest(m, ts.URL+"/run/contours/a.geojson", strings.NewReader("x"))
		resp, err := http.DefaultClient.Do(req)
		if err != nil {
			t.Fatal(err)
		}
		resp.Body.Close()
		if resp.StatusCode != http.StatusMethodNotAllowed {
			t.Errorf("%s: status %d, want 405", m, resp.StatusCode)
		}
	}
	if b, _ := os.ReadFile(filepath.Join(dir, "contours", "a.geojson")); string(b) != `{"type":"FeatureCollection","features":[]}` {
		t.Errorf("the run's file changed: %q", b)
	}
}

// The embedded map library and coastline are there, with their licences.
func TestVendoredAssets(t *testing.T) {
	for name, want := range map[string]string{
		"assets/vendor/ol/ol.js":                     "var ol=function()",
		"assets/vendor/ol/ol.css":                    ".ol-",
		"assets/vendor/ol/LICENSE.md":                "OpenLayers Contributors",
		"assets/vendor/world-atlas/land-50m.json":    `"type":"Topology"`,
		"assets/vendor/world-atlas/LICENSE":          "Michael Bostock",
		"assets/vendor/world-atlas/NATURAL_EARTH.md": "public domain",
	} {
		b, err := assets.ReadFile(name)
		if err != nil {
			t.Errorf("%s not embedded: %v", name, err)
			continue
		}
		if !strings.Contains(string(b[:min(len(b), 4000)]), want) {
			t.Errorf("%s does not start as expected (no %q)", name, want)
		}
	}
}
