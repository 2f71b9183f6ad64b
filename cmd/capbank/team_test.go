package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"net/http"
	"os/exec"
	"strings"
	"sync"
	"testing"
	"time"

	"capbank/web/store/postgres/pgtest"
)

// teamClient talks to one capbank instance.
type teamClient struct {
	base string
	hc   *http.Client
}

// call sends a request and returns the status, the ETag and the body.
func (c teamClient) call(method, path, body, ifMatch string) (int, string, []byte, error) {
	req, err := http.NewRequest(method, c.base+path, strings.NewReader(body))
	if err != nil {
		return 0, "", nil, err
	}
	if body != "" {
		req.Header.Set("Content-Type", "application/json")
	}
	if ifMatch != "" {
		req.Header.Set("If-Match", ifMatch)
	}
	res, err := c.hc.Do(req)
	if err != nil {
		return 0, "", nil, err
	}
	defer res.Body.Close()
	b, err := io.ReadAll(res.Body)
	return res.StatusCode, res.Header.Get("ETag"), b, err
}

// teamLog is what the workers were told, under a lock.
type teamLog struct {
	mu sync.Mutex
	// cells: id → the capacitance (F) of the last acknowledged write, or
	// -1 when its deletion was acknowledged.
	cells map[string]float64
	// designs: id → the name of the last acknowledged write.
	designs map[int64]string
	// contested: design id → acknowledged renames.
	contested map[int64]int
	stale     int
	failures  []string
}

func (l *teamLog) fail(format string, a ...any) {
	l.mu.Lock()
	defer l.mu.Unlock()
	if len(l.failures) < 20 {
		l.failures = append(l.failures, fmt.Sprintf(format, a...))
	}
}

// Three capbank processes on one PostgreSQL schema (ports 0), driven at
// once for a few seconds with creates, edits and deletes of cells and
// designs, each step through another instance than the one before: every
// instance then reads the same library and designs, every acknowledged
// write is there, and the edits of the designs every worker contests were
// either kept or refused with 412 — each contested design's version is one
// more than its acknowledged renames, so no update was lost.
func TestThreeInstancesOnePostgres(t *testing.T) {
	url := pgtest.Schema(t)
	bin, _ := buildCapbank(t)
	var procs []*server
	for range 3 {
		procs = append(procs, startProcess(t, exec.Command(bin, "serve", "--addr", "127.0.0.1:0", "--data", t.TempDir(), "--database", url)))
	}
	var clients []teamClient
	for _, p := range procs {
		defer p.stop()
		clients = append(clients, teamClient{base: p.waitURL(t), hc: &http.Client{Timeout: 20 * time.Second}})
	}

	log := &teamLog{cells: map[string]float64{}, designs: map[int64]string{}, contested: map[int64]int{}}
	// Two designs every worker renames.
	var contested []int64
	for i := range 2 {
		status, _, body, err := clients[i].call(http.MethodPost, "api/v1/designs", crashDesign(fmt.Sprintf("contested %d", i)), "")
		var d struct {
			ID int64 `json:"id"`
		}
		if err != nil || status != http.StatusCreated || json.Unmarshal(body, &d) != nil {
			t.Fatalf("contested design: %d %v %s", status, err, body)
		}
		contested = append(contested, d.ID)
	}

	const workers = 6
	deadline := time.Now().Add(3 * time.Second)
	var wg sync.WaitGroup
	for w := range workers {
		wg.Go(func() {
			for n := 0; time.Now().Before(deadline); n++ {
				pick := func(k int) teamClient { return clients[(w+n+k)%len(clients)] }
				// A cell: created on one instance, edited on the next with
				// the ETag the first gave, deleted on the third every
				// third time.
				id := fmt.Sprintf("team-w%d-%d", w, n)
				status, tag, body, err := pick(0).call(http.MethodPost, "api/v1/cells", crashCell(id), "")
				if err != nil || status != http.StatusCreated {
					log.fail("create %s: %d %v %s", id, status, err, body)
					continue
				}
				log.mu.Lock()
				log.cells[id] = 100
				log.mu.Unlock()
				edited := strings.Replace(crashCell(id), `"capacitance_f":100`, fmt.Sprintf(`"capacitance_f":%d`, 101+n), 1)
				status, tag, body, err = pick(1).call(http.MethodPut, "api/v1/cells/"+id, edited, tag)
				if err != nil || status != http.StatusOK {
					log.fail("edit %s: %d %v %s", id, status, err, body)
					continue
				}
				log.mu.Lock()
				log.cells[id] = float64(101 + n)
				log.mu.Unlock()
				if n%3 == 0 {
					status, _, body, err = pick(2).call(http.MethodDelete, "api/v1/cells/"+id, "", tag)
					if err != nil || status != http.StatusNoContent {
						log.fail("delete %s: %d %v %s", id, status, err, body)
					} else {
						log.mu.Lock()
						log.cells[id] = -1
						log.mu.Unlock()
					}
				}

				// A design of its own, renamed through another instance.
				name := fmt.Sprintf("team w%d n%d", w, n)
				status, tag, body, err = pick(1).call(http.MethodPost, "api/v1/designs", crashDesign(name), "")
				var d struct {
					ID int64 `json:"id"`
				}
				if err != nil || status != http.StatusCreated || json.Unmarshal(body, &d) != nil {
					log.fail("save design %s: %d %v %s", name, status, err, body)
					continue
				}
				log.mu.Lock()
				log.designs[d.ID] = name
				log.mu.Unlock()
				status, _, body, err = pick(2).call(http.MethodPatch, fmt.Sprintf("api/v1/designs/%d", d.ID), fmt.Sprintf(`{"name":%q}`, name+" renamed"), tag)
				if err != nil || status != http.StatusOK {
					log.fail("rename design %d: %d %v %s", d.ID, status, err, body)
				} else {
					log.mu.Lock()
					log.designs[d.ID] = name + " renamed"
					log.mu.Unlock()
				}

				// A contested design: read its version on one instance,
				// rename it on another; someone may have been quicker.
				cid := contested[n%len(contested)]
				_, tag, _, err = pick(0).call(http.MethodGet, fmt.Sprintf("api/v1/designs/%d", cid), "", "")
				if err != nil || tag == "" {
					log.fail("read contested %d: %v", cid, err)
					continue
				}
				status, _, body, err = pick(1).call(http.MethodPatch, fmt.Sprintf("api/v1/designs/%d", cid), fmt.Sprintf(`{"name":"contested, by w%d n%d"}`, w, n), tag)
				log.mu.Lock()
				switch {
				case err == nil && status == http.StatusOK:
					log.contested[cid]++
				case err == nil && status == http.StatusPreconditionFailed:
					log.stale++
				default:
					log.failures = append(log.failures, fmt.Sprintf("rename contested %d: %d %v %s", cid, status, err, body))
				}
				log.mu.Unlock()
			}
		})
	}
	wg.Wait()
	for _, f := range log.failures {
		t.Error(f)
	}
	if len(log.failures) > 0 {
		for i, p := range procs {
			t.Logf("instance %d's log:\n%s", i, p.stderr)
		}
	}
	if len(log.cells) < workers || log.stale == 0 {
		t.Fatalf("%d cells written, %d stale renames refused; the run was too short to test anything", len(log.cells), log.stale)
	}
	t.Logf("%d cells, %d designs, %d contested renames kept and %d refused as stale", len(log.cells), len(log.designs), log.contested[contested[0]]+log.contested[contested[1]], log.stale)

	// Every instance reads the same library and the same designs.
	var cellsBody, designsBody []byte
	for i, c := range clients {
		status, _, cb, err := c.call(http.MethodGet, "api/v1/cells", "", "")
		if err != nil || status != http.StatusOK {
			t.Fatalf("instance %d: cells %d %v", i, status, err)
		}
		status, _, db, err := c.call(http.MethodGet, "api/v1/designs", "", "")
		if err != nil || status != http.StatusOK {
			t.Fatalf("instance %d: designs %d %v", i, status, err)
		}
		if i == 0 {
			cellsBody, designsBody = cb, db
			continue
		}
		if !bytes.Equal(cb, cellsBody) || !bytes.Equal(db, designsBody) {
			t.Errorf("instance %d reads another library or other designs than instance 0", i)
		}
	}

	// No acknowledged write is lost.
	var lib struct {
		Cells []struct {
			Cell struct {
				ID           string  `json:"id"`
				CapacitanceF float64 `json:"capacitance_f"`
			} `json:"cell"`
		} `json:"cells"`
	}
	var designs struct {
		Designs []struct {
			ID      int64  `json:"id"`
			Name    string `json:"name"`
			Version int64  `json:"version"`
		} `json:"designs"`
	}
	if err := json.Unmarshal(cellsBody, &lib); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(designsBody, &designs); err != nil {
		t.Fatal(err)
	}
	have := map[string]float64{}
	for _, c := range lib.Cells {
		have[c.Cell.ID] = c.Cell.CapacitanceF
	}
	for id, f := range log.cells {
		got, ok := have[id]
		switch {
		case f < 0 && ok:
			t.Errorf("cell %s: its deletion was acknowledged, but it is there", id)
		case f >= 0 && !ok:
			t.Errorf("cell %s: acknowledged at %g F, but it is gone", id, f)
		case f >= 0 && got != f:
			t.Errorf("cell %s: %g F, want the last acknowledged %g F", id, got, f)
		}
	}
	saved := map[int64]struct {
		name    string
		version int64
	}{}
	for _, d := range designs.Designs {
		saved[d.ID] = struct {
			name    string
			version int64
		}{d.Name, d.Version}
	}
	for id, name := range log.designs {
		if saved[id].name != name {
			t.Errorf("design %d: named %q, want the last acknowledged %q", id, saved[id].name, name)
		}
	}
	for _, id := range contested {
		if want := int64(1 + log.contested[id]); saved[id].version != want {
			t.Errorf("contested design %d: version %d after %d acknowledged renames; want %d (an update was lost)", id, saved[id].version, log.contested[id], want)
		}
	}
}
