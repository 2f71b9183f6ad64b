package main

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math/rand/v2"
	"net/http"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"capbank/web/store"
	"capbank/web/store/sqlite"
)

// These tests run the real capbank binary: only a separate process can be
// killed with SIGKILL, run as another user or held to a file-size limit.

// buildCapbank builds the capbank binary into a directory every user may
// read (the read-only test runs it as another user) and returns its path
// and that directory.
func buildCapbank(t *testing.T) (bin, dir string) {
	t.Helper()
	dir, err := os.MkdirTemp("", "capbank-durability-")
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { os.RemoveAll(dir) })
	if err := os.Chmod(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	bin = filepath.Join(dir, "capbank")
	out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput()
	if err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return bin, dir
}

var servingLine = regexp.MustCompile(`msg="capbank is serving" url=(http://127\.0\.0\.1:\d+/)`)

// server is a running capbank serve process.
type server struct {
	cmd    *exec.Cmd
	url    chan string // the URL it logs, once
	stderr *lockedBuffer
	done   chan struct{} // closed when it has exited
}

// startProcess starts cmd (capbank serve on port 0) and reads its log.
func startProcess(t *testing.T, cmd *exec.Cmd) *server {
	t.Helper()
	pipe, err := cmd.StderrPipe()
	if err != nil {
		t.Fatal(err)
	}
	p := &server{cmd: cmd, url: make(chan string, 1), stderr: &lockedBuffer{}, done: make(chan struct{})}
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	go func() {
		sc := bufio.NewScanner(pipe)
		for sc.Scan() {
			line := sc.Text()
			p.stderr.Write([]byte(line + "\n"))
			if m := servingLine.FindStringSubmatch(line); m != nil {
				p.url <- m[1]
			}
		}
		cmd.Wait()
		close(p.done)
	}()
	return p
}

func serveCmd(bin, data string) *exec.Cmd {
	return exec.Command(bin, "serve", "--addr", "127.0.0.1:0", "--data", data)
}

// waitURL waits for the server's URL, or fails the test if it exits or
// takes longer than 20 s.
func (p *server) waitURL(t *testing.T) string {
	t.Helper()
	select {
	case u := <-p.url:
		return u
	case <-p.done:
		t.Fatalf("capbank serve exited before serving: %v\n%s", p.cmd.ProcessState, p.stderr)
	case <-time.After(20 * time.Second):
		p.kill()
		t.Fatalf("capbank serve logged no URL:\n%s", p.stderr)
	}
	return ""
}

func (p *server) kill() {
	p.cmd.Process.Signal(syscall.SIGKILL)
	<-p.done
}

// stop ends the server gracefully (SIGTERM) and waits.
func (p *server) stop() {
	p.cmd.Process.Signal(syscall.SIGTERM)
	select {
	case <-p.done:
	case <-time.After(15 * time.Second):
		p.kill()
	}
}

// crashCell is the JSON of an invented cell for the crash test.
func crashCell(id string) string {
	return fmt.Sprintf(`{"id":%q,"name":"Crash-test cell (invented)","rated_v":2.7,"capacitance_f":100,"esr_ohm":0.009,"notes":%q}`,
		id, strings.Repeat("n", 300))
}

// crashDesign is a saved design's body: a name and a small valid design.
func crashDesign(name string) string {
	return fmt.Sprintf(`{"name":%q,"design":{"name":%q,"window":{"max_v":48,"min_v":24},`+
		`"load":{"steps":[{"power_w":500,"duration_s":10}]},"cells":["demo-2v7-650f"]}}`, name, name)
}

// acked is what the killed servers acknowledged: cell ids, and design ids
// with their names.
type acked struct {
	mu      sync.Mutex
	cells   []string
	designs map[int64]string
}

// write posts cells and designs until stop closes or the server goes,
// recording every 201.
func (a *acked) write(client *http.Client, url, prefix string, stop <-chan struct{}) {
	for i := 0; ; i++ {
		select {
		case <-stop:
			return
		default:
		}
		id := fmt.Sprintf("%s-%d", prefix, i)
		path, body := "api/v1/cells", crashCell(id)
		if i%2 == 1 {
			path, body = "api/v1/designs", crashDesign(id)
		}
		resp, err := client.Post(url+path, "application/json", strings.NewReader(body))
		if err != nil {
			return // killed
		}
		data, err := io.ReadAll(resp.Body)
		resp.Body.Close()
		if err != nil || resp.StatusCode != http.StatusCreated {
			return
		}
		a.mu.Lock()
		if i%2 == 0 {
			a.cells = append(a.cells, id)
		} else {
			var rec struct {
				ID int64 `json:"id"`
			}
			if json.Unmarshal(data, &rec) == nil && rec.ID > 0 {
				a.designs[rec.ID] = id
			}
		}
		a.mu.Unlock()
	}
}

// A real capbank process writing cells and designs over HTTP is killed
// with SIGKILL at random moments, 50 times and more, some of them while
// it starts (migrations, seeding the demo cells). Each restart must open
// the database; at the end SQLite's integrity check must pass and every
// write a server answered 201 must be there. The seed is logged so a
// failure can be replayed.
func TestCrashKeepsAcknowledgedWrites(t *testing.T) {
	if testing.Short() {
		t.Skip("starts and kills capbank 50 times")
	}
	t.Parallel()
	bin, _ := buildCapbank(t)
	data := t.TempDir()
	seed := uint64(time.Now().UnixNano())
	t.Logf("seed %d", seed)
	rng := rand.New(rand.NewPCG(seed, 9))
	a := &acked{designs: map[int64]string{}}
	client := &http.Client{Timeout: 10 * time.Second, Transport: &http.Transport{DisableKeepAlives: rng.IntN(2) == 0}}

	const kills = 50
	startupKills := 0
	for k := range kills {
		p := startProcess(t, serveCmd(bin, data))
		if k > 0 && rng.IntN(5) == 0 {
			// Kill it while it opens the database and seeds the demo cells.
			time.Sleep(time.Duration(rng.IntN(40)) * time.Millisecond)
			p.kill()
			startupKills++
			continue
		}
		url := p.waitURL(t)
		stop := make(chan struct{})
		var wg sync.WaitGroup
		for w := range 2 {
			wg.Go(func() { a.write(client, url, fmt.Sprintf("crash-%d-%d", k, w), stop) })
		}
		time.Sleep(time.Duration(5+rng.IntN(150)) * time.Millisecond)
		p.kill()
		close(stop)
		wg.Wait()
	}
	t.Logf("%d kills (%d while starting); %d cells and %d designs acknowledged", kills, startupKills, len(a.cells), len(a.designs))
	if len(a.cells) < kills || len(a.designs) < kills/2 {
		t.Fatalf("only %d cells and %d designs acknowledged: the writers did not get going", len(a.cells), len(a.designs))
	}

	ctx := context.Background()
	st, err := sqlite.Open(ctx, filepath.Join(data, store.FileName))
	if err != nil {
		t.Fatalf("the database does not open after the kills: %v", err)
	}
	defer st.Close()
	if err := st.IntegrityCheck(ctx); err != nil {
		t.Fatal(err)
	}
	for _, id := range a.cells {
		if _, err := st.GetCell(ctx, id); err != nil {
			t.Errorf("acknowledged cell %s: %v", id, err)
		}
	}
	for id, name := range a.designs {
		rec, err := st.GetDesign(ctx, id)
		if err != nil || rec.Name != name {
			t.Errorf("acknowledged design %d %q: %+v, %v", id, name, rec.Name, err)
		}
	}
}

// asOtherUser runs cmd as nobody when the tests run as root, whom file
// permissions do not stop; otherwise as the current user.
func asOtherUser(cmd *exec.Cmd) {
	if os.Geteuid() == 0 {
		cmd.SysProcAttr = &syscall.SysProcAttr{Credential: &syscall.Credential{Uid: 65534, Gid: 65534, Groups: []uint32{}}}
	}
}

// ownedByOther makes dir belong to the user asOtherUser runs as.
func ownedByOther(t *testing.T, dir string) {
	t.Helper()
	if os.Geteuid() == 0 {
		if err := os.Chown(dir, 65534, 65534); err != nil {
			t.Fatal(err)
		}
	}
}

// A data directory capbank may not write is an error at start that names
// it, exit status 1, whether it is empty or already holds a database; so
// is a database file that is read-only. Nothing is served that could
// then fail to save.
func TestReadOnlyDataIsAnErrorAtStart(t *testing.T) {
	if testing.Short() {
		t.Skip("runs the capbank binary")
	}
	t.Parallel()
	bin, dir := buildCapbank(t)
	mk := func(name string) string {
		d := filepath.Join(dir, name)
		if err := os.Mkdir(d, 0o755); err != nil {
			t.Fatal(err)
		}
		ownedByOther(t, d)
		return d
	}
	// A database made by a first, writable run.
	withDB := mk("with-db")
	cmd := serveCmd(bin, withDB)
	asOtherUser(cmd)
	p := startProcess(t, cmd)
	p.waitURL(t)
	p.stop()
	if _, err := os.Stat(filepath.Join(withDB, store.FileName)); err != nil {
		t.Fatal(err)
	}
	roFile := mk("read-only-file")
	cmd = serveCmd(bin, roFile)
	asOtherUser(cmd)
	p = startProcess(t, cmd)
	p.waitURL(t)
	p.stop()

	empty := mk("empty")
	for _, d := range []string{empty, withDB} {
		if err := os.Chmod(d, 0o555); err != nil {
			t.Fatal(err)
		}
	}
	if err := os.Chmod(filepath.Join(roFile, store.FileName), 0o444); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() {
		os.Chmod(empty, 0o755)
		os.Chmod(withDB, 0o755)
	})
	cases := []struct {
		name, data, want string
	}{
		{"empty read-only directory", empty, "is not writable"},
		{"read-only directory with a database", withDB, "is not writable"},
		{"read-only database file", roFile, "the database is read-only"},
	}
	for _, c := range cases {
		cmd := serveCmd(bin, c.data)
		asOtherUser(cmd)
		var stderr bytes.Buffer
		cmd.Stderr = &stderr
		err := cmd.Run()
		code := -1
		if ee, ok := err.(*exec.ExitError); ok {
			code = ee.ExitCode()
		}
		msg := stderr.String()
		if code != 1 || !strings.Contains(msg, c.want) || !strings.Contains(msg, c.data) || strings.Contains(msg, "capbank is serving") {
			t.Errorf("%s: exit %d (%v), stderr:\n%s", c.name, code, err, msg)
		}
	}
}

// A full disk (a file-size limit on the process stands in for one: its
// writes fail with EFBIG, as they would with ENOSPC) gives each write that
// does not fit a 503 saying nothing was saved, never a 201 for a write
// that was lost: after a restart without the limit every 201 is there,
// and the database is sound.
func TestFullDiskIsAClearErrorAtWrite(t *testing.T) {
	if testing.Short() {
		t.Skip("runs the capbank binary")
	}
	if _, err := exec.LookPath("sh"); err != nil {
		t.Skip("no sh to set the file-size limit with ulimit")
	}
	t.Parallel()
	bin, _ := buildCapbank(t)
	data := t.TempDir()
	p := startProcess(t, serveCmd(bin, data))
	p.waitURL(t)
	p.stop()
	fi, err := os.Stat(filepath.Join(data, store.FileName))
	if err != nil {
		t.Fatal(err)
	}
	// No file may grow past the database's size plus 64 KiB: a few
	// writes fit in the write-ahead log, then the disk is "full". ulimit
	// -f counts 512-byte blocks (POSIX).
	blocks := (fi.Size() + 64<<10) / 512
	cmd := exec.Command("sh", "-c", fmt.Sprintf(`ulimit -f %d && exec "$0" "$@"`, blocks),
		bin, "serve", "--addr", "127.0.0.1:0", "--data", data)
	p = startProcess(t, cmd)
	url := p.waitURL(t)
	var saved []string
	refused := 0
	client := &http.Client{Timeout: 10 * time.Second}
	for i := range 60 {
		id := fmt.Sprintf("full-%d", i)
		resp, err := client.Post(url+"api/v1/cells", "application/json", strings.NewReader(crashCell(id)))
		if err != nil {
			t.Fatalf("write %d: %v", i, err)
		}
		body, _ := io.ReadAll(resp.Body)
		resp.Body.Close()
		switch resp.StatusCode {
		case http.StatusCreated:
			saved = append(saved, id)
		case http.StatusServiceUnavailable:
			refused++
			var prob struct{ Type, Title, Detail string }
			json.Unmarshal(body, &prob)
			if prob.Type != "/problems/storage" || prob.Title != "Nothing was saved" || !strings.Contains(prob.Detail, "disk") {
				t.Errorf("write %d: problem %s", i, body)
			}
		default:
			t.Errorf("write %d: status %d: %s", i, resp.StatusCode, body)
		}
	}
	p.kill()
	if len(saved) == 0 || refused == 0 {
		t.Fatalf("%d writes saved, %d refused: the limit did not bite where expected", len(saved), refused)
	}
	t.Logf("%d writes saved, %d refused as the disk filled", len(saved), refused)

	ctx := context.Background()
	st, err := sqlite.Open(ctx, filepath.Join(data, store.FileName))
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	if err := st.IntegrityCheck(ctx); err != nil {
		t.Fatal(err)
	}
	for _, id := range saved {
		if _, err := st.GetCell(ctx, id); err != nil {
			t.Errorf("saved cell %s: %v", id, err)
		}
	}
}
