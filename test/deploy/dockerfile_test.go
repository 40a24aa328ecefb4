package deploy

import (
	"bufio"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"sync"
	"testing"
)

// repoRoot is the module root, where the Dockerfile's build context is.
const repoRoot = "../.."

// dockerfile is what the tests need of deploy/Dockerfile.
type dockerfile struct {
	froms      []string          // image of each FROM, in order
	finalFrom  string            // image of the last stage
	args       map[string]string // ARG defaults
	buildEnv   []string          // NAME=VALUE before "go build"
	buildArgs  []string          // the arguments after "go build", -o value as written
	output     string            // the -o value
	user       string            // USER of the final stage
	entrypoint string            // ENTRYPOINT as written
	copies     []string          // COPY lines of the final stage
}

// readDockerfile parses deploy/Dockerfile: line continuations, ARG,
// FROM, RUN (the one with go build), USER, COPY and ENTRYPOINT.
func readDockerfile(t *testing.T) *dockerfile {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(repoRoot, "deploy", "Dockerfile"))
	if err != nil {
		t.Fatal(err)
	}
	var lines []string
	var cur strings.Builder
	sc := bufio.NewScanner(strings.NewReader(string(b)))
	for sc.Scan() {
		l := strings.TrimSpace(sc.Text())
		if strings.HasPrefix(l, "#") || (l == "" && cur.Len() == 0) {
			continue
		}
		if strings.HasSuffix(l, `\`) {
			cur.WriteString(strings.TrimSuffix(l, `\`) + " ")
			continue
		}
		cur.WriteString(l)
		lines = append(lines, cur.String())
		cur.Reset()
	}
	d := &dockerfile{args: map[string]string{}}
	for _, l := range lines {
		instr, rest, _ := strings.Cut(l, " ")
		rest = strings.TrimSpace(rest)
		switch strings.ToUpper(instr) {
		case "ARG":
			name, def, _ := strings.Cut(rest, "=")
			d.args[name] = def
		case "FROM":
			image := strings.Fields(rest)[0]
			d.froms = append(d.froms, image)
			d.finalFrom = expand(image, d.args)
			d.user, d.entrypoint, d.copies = "", "", nil
		case "USER":
			d.user = rest
		case "ENTRYPOINT":
			d.entrypoint = rest
		case "COPY":
			d.copies = append(d.copies, rest)
		case "RUN":
			if !strings.Contains(rest, "go build") {
				continue
			}
			words, err := shellWords(rest)
			if err != nil {
				t.Fatalf("Dockerfile RUN %q: %v", rest, err)
			}
			i := 0
			for ; i < len(words) && regexp.MustCompile(`^[A-Z_][A-Z0-9_]*=`).MatchString(words[i]); i++ {
				d.buildEnv = append(d.buildEnv, words[i])
			}
			if i+1 >= len(words) || words[i] != "go" || words[i+1] != "build" {
				t.Fatalf("Dockerfile RUN %q: want [NAME=value ...] go build ...", rest)
			}
			d.buildArgs = words[i+2:]
			for j, w := range d.buildArgs {
				if w == "-o" && j+1 < len(d.buildArgs) {
					d.output = d.buildArgs[j+1]
				}
			}
		}
	}
	if d.buildArgs == nil {
		t.Fatal("Dockerfile has no RUN ... go build")
	}
	return d
}

// shellWords splits a simple shell command line: words separated by
// blanks, with single and double quotes; anything fancier is refused.
func shellWords(s string) ([]string, error) {
	var words []string
	var w strings.Builder
	inWord := false
	for i := 0; i < len(s); i++ {
		c := s[i]
		switch {
		case c == ' ' || c == '\t':
			if inWord {
				words = append(words, w.String())
				w.Reset()
				inWord = false
			}
		case c == '\'' || c == '"':
			j := strings.IndexByte(s[i+1:], c)
			if j < 0 {
				return nil, fmt.Errorf("unclosed %c", c)
			}
			w.WriteString(s[i+1 : i+1+j])
			i += j + 1
			inWord = true
		case strings.IndexByte("|&;<>()`\\", c) >= 0:
			return nil, fmt.Errorf("shell syntax %q not handled", c)
		default:
			w.WriteByte(c)
			inWord = true
		}
	}
	if inWord {
		words = append(words, w.String())
	}
	return words, nil
}

// expand replaces ${NAME} and $NAME by values.
func expand(s string, values map[string]string) string {
	return os.Expand(s, func(k string) string { return values[k] })
}

// imageTag returns the tag of an image reference ("" when it has none);
// a digest counts as a tag.
func imageTag(ref string) string {
	if _, digest, ok := strings.Cut(ref, "@"); ok {
		return digest
	}
	last := ref[strings.LastIndex(ref, "/")+1:]
	_, tag, _ := strings.Cut(last, ":")
	return tag
}

// imageUID returns the numeric user and group of the final stage.
func (d *dockerfile) imageUID(t *testing.T) (uid, gid uint32) {
	t.Helper()
	m := regexp.MustCompile(`^(\d+):(\d+)$`).FindStringSubmatch(d.user)
	if m == nil {
		t.Fatalf("Dockerfile final USER %q: want numeric uid:gid", d.user)
	}
	u, _ := strconv.ParseUint(m[1], 10, 32)
	g, _ := strconv.ParseUint(m[2], 10, 32)
	return uint32(u), uint32(g)
}

// Values of the Dockerfile's build arguments in the tests.
var buildArgValues = map[string]string{"VERSION": "9.8.7-test", "COMMIT": "c0ffee1"}

var (
	buildOnce sync.Once
	builtBin  string
	buildErr  error
	buildDir  string
)

// binary builds ./cmd/api once with the Dockerfile's exact environment
// and flags (its -o replaced by a temporary path) and returns its path.
// The directory is world-readable so that another user can run it.
func binary(t *testing.T) string {
	t.Helper()
	d := readDockerfile(t)
	buildOnce.Do(func() {
		buildDir, buildErr = os.MkdirTemp("", "thermal-image-")
		if buildErr != nil {
			return
		}
		if buildErr = os.Chmod(buildDir, 0o755); buildErr != nil {
			return
		}
		builtBin = filepath.Join(buildDir, "api")
		values := map[string]string{}
		for k, v := range d.args {
			values[k] = v
		}
		for k, v := range buildArgValues {
			values[k] = v
		}
		var args []string
		for i := 0; i < len(d.buildArgs); i++ {
			a := expand(d.buildArgs[i], values)
			if a == "-o" {
				args = append(args, "-o", builtBin)
				i++
				continue
			}
			args = append(args, a)
		}
		cmd := exec.Command("go", append([]string{"build"}, args...)...)
		cmd.Dir = repoRoot
		cmd.Env = os.Environ()
		for _, e := range d.buildEnv {
			cmd.Env = append(cmd.Env, expand(e, values))
		}
		out, err := cmd.CombinedOutput()
		if err != nil {
			buildErr = fmt.Errorf("go build %q: %v\n%s", args, err, out)
		}
	})
	if buildErr != nil {
		t.Fatal(buildErr)
	}
	return builtBin
}

func TestMain(m *testing.M) {
	code := m.Run()
	if buildDir != "" {
		os.RemoveAll(buildDir)
	}
	os.Exit(code)
}

// TestDockerfilePolicy checks the image recipe: pinned bases, a static
// trimmed build with the version injected, a minimal non-root final
// stage and a vector-form entrypoint that runs the built binary.
func TestDockerfilePolicy(t *testing.T) {
	d := readDockerfile(t)
	if len(d.froms) < 2 {
		t.Errorf("FROM %v: want a multi-stage build", d.froms)
	}
	for _, f := range d.froms {
		img := expand(f, d.args)
		if img == "scratch" {
			continue
		}
		if tag := imageTag(img); tag == "" || tag == "latest" {
			t.Errorf("FROM %s (%s): want a pinned tag, not latest or none", f, img)
		}
	}
	if !(d.finalFrom == "scratch" || strings.Contains(d.finalFrom, "distroless") && strings.Contains(d.finalFrom, "nonroot")) {
		t.Errorf("final FROM %s: want scratch or a distroless nonroot image", d.finalFrom)
	}
	env := strings.Join(d.buildEnv, " ")
	args := strings.Join(d.buildArgs, " ")
	for _, want := range []string{"CGO_ENABLED=0"} {
		if !strings.Contains(env, want) {
			t.Errorf("go build environment %q lacks %s", env, want)
		}
	}
	for _, want := range []string{"-trimpath", "-X main.version=${VERSION}", "-X main.commit=${COMMIT}", "./cmd/api"} {
		if !strings.Contains(args, want) {
			t.Errorf("go build %q lacks %s", args, want)
		}
	}
	uid, _ := d.imageUID(t)
	if uid == 0 {
		t.Errorf("final USER %s is root", d.user)
	}
	var entry []string
	if err := json.Unmarshal([]byte(d.entrypoint), &entry); err != nil || len(entry) == 0 {
		t.Fatalf("ENTRYPOINT %s: want the vector form [\"/api\"]", d.entrypoint)
	}
	copied := false
	for _, c := range d.copies {
		f := strings.Fields(c)
		if len(f) == 3 && strings.HasPrefix(f[0], "--from=") && f[1] == d.output && f[2] == entry[0] {
			copied = true
		}
	}
	if !copied {
		t.Errorf("the final stage does not COPY the built %s to the ENTRYPOINT %s: %q", d.output, entry[0], d.copies)
	}
	ignore, err := os.ReadFile(filepath.Join(repoRoot, ".dockerignore"))
	if err != nil {
		t.Fatalf(".dockerignore: %v", err)
	}
	for _, want := range []string{".git", "**/*_test.go"} {
		if !strings.Contains(string(ignore), want) {
			t.Errorf(".dockerignore lacks %s", want)
		}
	}
}
