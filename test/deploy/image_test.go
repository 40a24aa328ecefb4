package deploy

import (
	"bufio"
	"bytes"
	"encoding/json"
	"io"
	"net/http"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/thermalmovement/service/api"
)

// TestBinaryRunsAsImageUser builds the binary as the Dockerfile does and
// runs it as the image would: as the Dockerfile's numeric USER (when the
// test runs as root; else as the current, non-root, user), in a
// read-only working directory, with nothing but the binary and the
// environment of the Deployment. It must serve the embedded OpenAPI file
// and catalogue, report the injected version and stop cleanly on SIGTERM.
func TestBinaryRunsAsImageUser(t *testing.T) {
	bin := binary(t)
	uid, gid := readDockerfile(t).imageUID(t)

	work := filepath.Join(filepath.Dir(bin), "work")
	if err := os.Mkdir(work, 0o555); err != nil && !os.IsExist(err) {
		t.Fatal(err)
	}
	if err := os.Chmod(work, 0o555); err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(bin)
	cmd.Dir = work
	cmd.Env = []string{"ADDR=127.0.0.1:0", "METRICS_ADDR=127.0.0.1:0", "SHUTDOWN_DELAY=0s", "GOMEMLIMIT=268435456"}
	wantUID := uint32(os.Geteuid())
	if os.Geteuid() == 0 {
		cmd.SysProcAttr = &syscall.SysProcAttr{Credential: &syscall.Credential{Uid: uid, Gid: gid}}
		wantUID = uid
	}
	stdout, err := cmd.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	exited := make(chan error, 1)
	serving := make(chan map[string]any, 1)
	go func() {
		sc := bufio.NewScanner(stdout)
		for sc.Scan() {
			var line map[string]any
			if json.Unmarshal(sc.Bytes(), &line) == nil && line["msg"] == "serving" {
				serving <- line
			}
		}
		exited <- cmd.Wait()
	}()
	defer cmd.Process.Kill() // after a clean exit, a no-op
	var line map[string]any
	select {
	case line = <-serving:
	case err := <-exited:
		t.Fatalf("the binary exited before serving: %v\n%s", err, stderr.String())
	case <-time.After(20 * time.Second):
		t.Fatalf("the binary did not log serving in 20 s\n%s", stderr.String())
	}
	if line["version"] != buildArgValues["VERSION"] || line["commit"] != buildArgValues["COMMIT"] {
		t.Errorf("serving line %v: want version %s and commit %s injected by -ldflags", line, buildArgValues["VERSION"], buildArgValues["COMMIT"])
	}

	status, err := os.ReadFile("/proc/" + strconv.Itoa(cmd.Process.Pid) + "/status")
	if err != nil {
		t.Fatal(err)
	}
	for _, l := range strings.Split(string(status), "\n") {
		if f := strings.Fields(l); len(f) == 5 && (f[0] == "Uid:" || f[0] == "Gid:") {
			want := wantUID
			if f[0] == "Gid:" {
				want = uint32(os.Getegid())
				if os.Geteuid() == 0 {
					want = gid
				}
			}
			for _, id := range f[1:] {
				if id != strconv.Itoa(int(want)) {
					t.Errorf("/proc status %s, want every id %d", l, want)
				}
			}
			if f[0] == "Uid:" && f[1] == "0" {
				t.Errorf("the service runs as root: %s", l)
			}
		}
	}

	base := "http://" + line["addr"].(string)
	client := &http.Client{Timeout: 5 * time.Second}
	fetch := func(url string) (int, []byte) {
		resp, err := client.Get(url)
		if err != nil {
			t.Fatalf("GET %s: %v", url, err)
		}
		defer resp.Body.Close()
		b, _ := io.ReadAll(resp.Body)
		return resp.StatusCode, b
	}
	for _, path := range []string{"/healthz", "/readyz", "/v1/materials/structural-steel",
		"/v1/expansion/linear?length=48%20m&material=structural-steel&delta_t=50%20K"} {
		if code, body := fetch(base + path); code != http.StatusOK {
			t.Errorf("GET %s = %d %s, want 200", path, code, body)
		}
	}
	if code, body := fetch(base + "/openapi.yaml"); code != http.StatusOK || !bytes.Equal(body, api.Spec) {
		t.Errorf("GET /openapi.yaml = %d, %d bytes; want 200 with the embedded api/openapi.yaml", code, len(body))
	}
	code, metrics := fetch("http://" + line["metrics_addr"].(string) + "/metrics")
	if code != http.StatusOK || !bytes.Contains(metrics, []byte(`version="`+buildArgValues["VERSION"]+`"`)) {
		t.Errorf("GET /metrics = %d; want 200 with thermal_build_info of version %s", code, buildArgValues["VERSION"])
	}

	if err := cmd.Process.Signal(syscall.SIGTERM); err != nil {
		t.Fatal(err)
	}
	select {
	case err := <-exited:
		if err != nil {
			t.Errorf("exit after SIGTERM: %v, want 0\n%s", err, stderr.String())
		}
	case <-time.After(20 * time.Second):
		t.Fatal("no exit 20 s after SIGTERM")
	}
}
