package main

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// TestExplorerInTmux drives the real binary in a tmux session: it waits
// for the fixed points, steps the flow, selects a fixed point, opens the
// help, and quits; the session must end (the terminal restored) and each
// screen show what the keys asked for. .ci/run installs tmux where the
// machine lacks it.
func TestExplorerInTmux(t *testing.T) {
	if _, err := exec.LookPath("tmux"); err != nil {
		t.Skip("tmux not installed")
	}
	dir := t.TempDir()
	bin := filepath.Join(dir, "scalewalk")
	if out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput(); err != nil {
		t.Fatalf("build: %v\n%s", err, out)
	}
	sock := filepath.Join(dir, "tmux.sock")
	tm := func(args ...string) (string, error) {
		out, err := exec.Command("tmux", append([]string{"-S", sock}, args...)...).CombinedOutput()
		return string(out), err
	}
	if out, err := tm("new-session", "-d", "-s", "e2e", "-x", "100", "-y", "30", bin+" explore monolayer"); err != nil {
		t.Fatalf("tmux: %v %s", err, out)
	}
	defer tm("kill-server")
	screen := func() string { s, _ := tm("capture-pane", "-t", "e2e", "-p"); return s }
	waitFor := func(what string) string {
		deadline := time.Now().Add(20 * time.Second)
		for time.Now().Before(deadline) {
			if s := screen(); strings.Contains(s, what) {
				return s
			}
			time.Sleep(100 * time.Millisecond)
		}
		t.Fatalf("timed out waiting for %q; screen:\n%s", what, screen())
		return ""
	}
	waitFor("fixed point(s)")
	tm("send-keys", "-t", "e2e", "Space", "Space")
	waitFor("2 K=")
	tm("send-keys", "-t", "e2e", "Tab", "Tab")
	waitFor("fixed point 2/")
	tm("send-keys", "-t", "e2e", "?")
	waitFor("any key returns")
	tm("send-keys", "-t", "e2e", "Escape")
	tm("send-keys", "-t", "e2e", "q")
	deadline := time.Now().Add(10 * time.Second)
	for time.Now().Before(deadline) {
		if out, _ := tm("has-session", "-t", "e2e"); strings.Contains(out, "can't find") || strings.Contains(out, "no server") || strings.Contains(out, "error") {
			return
		}
		if _, err := tm("has-session", "-t", "e2e"); err != nil {
			return
		}
		time.Sleep(100 * time.Millisecond)
	}
	t.Errorf("the explorer did not quit on q; screen:\n%s", screen())
}

var _ = os.Getenv
