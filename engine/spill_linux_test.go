package engine_test

import (
	"bytes"
	"os"
	"os/exec"
	"os/signal"
	"strings"
	"syscall"
	"testing"

	"github.com/assay-project/assay/engine"
	"github.com/assay-project/assay/engine/source"
)

// fsizeChild, set to 1, makes TestSpillWriteFails run in this process.
const fsizeChild = "ASSAY_TEST_FSIZE_CHILD"

// TestSpillWriteFails limits the size of the files the process may write
// below that of the spill, as a full disk would: writing it fails, the
// second pass reads the data again and the results are those of a run
// without a spill. The limit holds for the whole process, so that go
// test's own log is not cut short by it the test runs in a child process
// (the test binary again, running only this test).
func TestSpillWriteFails(t *testing.T) {
	if os.Getenv(fsizeChild) != "1" {
		cmd := exec.Command(os.Args[0], "-test.run=^TestSpillWriteFails$", "-test.count=1", "-test.v")
		cmd.Env = append(os.Environ(), fsizeChild+"=1")
		out, err := cmd.CombinedOutput()
		if err != nil {
			t.Fatalf("the limited run failed: %v\n%s", err, out)
		}
		if strings.Contains(string(out), "--- SKIP: TestSpillWriteFails") {
			t.Skipf("the limited run was skipped:\n%s", out)
		}
		if !strings.Contains(string(out), "--- PASS: TestSpillWriteFails") {
			t.Fatalf("the limited run did not pass:\n%s", out)
		}
		return
	}
	pol := writeSpillData(t, 2000, 0)
	tmp := t.TempDir()
	want := runResults(t, pol, engine.ForceSpill(engine.Options{}, false))

	var old syscall.Rlimit
	if err := syscall.Getrlimit(syscall.RLIMIT_FSIZE, &old); err != nil {
		t.Skipf("cannot read the file size limit: %v", err)
	}
	signal.Ignore(syscall.SIGXFSZ) // a write past the limit then fails with EFBIG
	defer signal.Reset(syscall.SIGXFSZ)
	limit := old
	limit.Cur = 4096
	if err := syscall.Setrlimit(syscall.RLIMIT_FSIZE, &limit); err != nil {
		t.Skipf("cannot limit the file size: %v", err)
	}
	restored := false
	restore := func() {
		if !restored {
			restored = true
			if err := syscall.Setrlimit(syscall.RLIMIT_FSIZE, &old); err != nil {
				t.Fatal(err)
			}
		}
	}
	defer restore()
	seen := map[int][]string{} // by pass, the files open after its first batch
	looked := map[int]bool{}
	opts := engine.Options{Source: source.Options{TempDir: tmp}}
	opts.Progress = func(p engine.Progress) {
		if files, ok := openUnder(tmp); ok && p.Rows > 0 && !looked[p.Pass] {
			seen[p.Pass], looked[p.Pass] = files, true
		}
	}
	got := runResults(t, pol, opts)
	restore()
	if !bytes.Equal(got, want) {
		t.Errorf("results differ when the spill cannot be written:\n%s", firstDifference(want, got, "without a spill", "failed spill"))
	}
	if _, ok := openUnder(tmp); ok {
		if files := seen[1]; len(files) != 1 || !strings.Contains(files[0], "assay-spill-") {
			t.Errorf("pass 1: open under the temporary folder: %q; want the spill alone", files)
		}
		if files := seen[2]; !looked[2] || len(files) > 0 {
			t.Errorf("pass 2 (seen: %v): open under the temporary folder: %q; want nothing", looked[2], files)
		}
	}
}
