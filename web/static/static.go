// Package static holds the workbench's style sheet and script, embedded in
// the binary, and the versioned addresses the pages load them from.
package static

import (
	"crypto/sha256"
	"embed"
	"encoding/hex"
	"io/fs"
	"net/http"
	"strings"
)

// FS holds the embedded assets, by file name.
//
//go:embed style.css app.js
var FS embed.FS

// Prefix is the path the assets are served under.
const Prefix = "/static/"

var versions = func() map[string]string {
	v := map[string]string{}
	entries, err := fs.ReadDir(FS, ".")
	if err != nil {
		panic("static: " + err.Error()) // the embedded FS is fixed at build time
	}
	for _, e := range entries {
		b, err := FS.ReadFile(e.Name())
		if err != nil {
			panic("static: " + err.Error())
		}
		sum := sha256.Sum256(b)
		v[e.Name()] = hex.EncodeToString(sum[:6])
	}
	return v
}()

// URL returns the address of the asset name, with a version that changes
// with its content, so that it can be cached for long. It panics if name is
// not an embedded asset (a programmer error).
func URL(name string) string {
	v, ok := versions[name]
	if !ok {
		panic("static: no asset " + name)
	}
	return Prefix + name + "?v=" + v
}

// Has reports whether name is an embedded asset.
func Has(name string) bool {
	_, ok := versions[name]
	return ok
}

// Handler serves the assets under [Prefix]. A request that carries the
// current version may be cached for a year; others must revalidate.
func Handler() http.Handler {
	files := http.StripPrefix(Prefix, http.FileServerFS(FS))
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		name := strings.TrimPrefix(r.URL.Path, Prefix)
		v, ok := versions[name]
		switch {
		case !ok: // no directory listings, nothing but the assets
			http.NotFound(w, r)
			return
		case r.URL.Query().Get("v") == v:
			w.Header().Set("Cache-Control", "public, max-age=31536000, immutable")
		default:
			w.Header().Set("Cache-Control", "no-cache")
		}
		files.ServeHTTP(w, r)
	})
}
