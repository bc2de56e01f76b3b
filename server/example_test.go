package server_test

import (
	"encoding/json"
	"fmt"
	"net/http/httptest"

	"gyrebench/server"
)

// A Server is an http.Handler; its first run opens the default scenario,
// paused, and /api/runs lists the runs. It answers only to the host
// names it was told of (Options.Hosts) besides loopback.
func ExampleNew() {
	srv, err := server.New(server.Options{Workers: 1})
	if err != nil {
		fmt.Println(err)
		return
	}
	defer srv.Close()
	rec := httptest.NewRecorder()
	srv.ServeHTTP(rec, httptest.NewRequest("GET", "http://localhost/api/runs", nil))
	var runs []server.RunInfo
	if err := json.Unmarshal(rec.Body.Bytes(), &runs); err != nil {
		fmt.Println(err)
		return
	}
	for _, r := range runs {
		fmt.Println(r.ID, r.Scenario, r.Grid, r.N, r.Scheme, r.State)
	}
	// Output: 1 shear-rollup hex 64 trisk-energy paused
}
