// Package pgtest starts a throwaway PostgreSQL server for tests: initdb
// into a temporary folder, the server on a free port of 127.0.0.1, run as
// an unprivileged user when the tests run as root (initdb refuses root),
// and stopped when the test ends.
//
// Where PostgreSQL's programs are missing the test is skipped with the
// reason, visibly; `make test` installs Debian's postgresql package first,
// so on this project's machines the tests run.
package pgtest

import (
	"fmt"
	"net"
	"os"
	"os/exec"
	"os/user"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"testing"
)

// binDir finds the folder of initdb, pg_ctl and postgres: on PATH, or
// Debian's /usr/lib/postgresql/VERSION/bin.
func binDir() (string, error) {
	if p, err := exec.LookPath("initdb"); err == nil {
		if _, err := exec.LookPath("pg_ctl"); err == nil {
			return filepath.Dir(p), nil
		}
	}
	matches, _ := filepath.Glob("/usr/lib/postgresql/*/bin/initdb")
	if len(matches) > 0 {
		return filepath.Dir(matches[len(matches)-1]), nil
	}
	return "", fmt.Errorf("PostgreSQL's initdb and pg_ctl are not installed (Debian: apt-get install postgresql; make test does it)")
}

// Start starts a server for t and returns its connection string, of the
// database "postgres" as the superuser "postgres" (trust on 127.0.0.1).
func Start(t testing.TB) string {
	t.Helper()
	bin, err := binDir()
	if err != nil {
		t.Skipf("PostgreSQL tests skipped: %v", err)
	}
	var cred *syscall.Credential
	// t.TempDir's parent is private to root: the server's folder is made
	// beside it, open to the server's user.
	dir, err := os.MkdirTemp("", "geored-pgtest-")
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { os.RemoveAll(dir) })
	if os.Geteuid() == 0 {
		u, err := user.Lookup("nobody")
		if err != nil {
			t.Skipf("PostgreSQL tests skipped: running as root and there is no user nobody to run the server as: %v", err)
		}
		uid, _ := strconv.Atoi(u.Uid)
		gid, _ := strconv.Atoi(u.Gid)
		cred = &syscall.Credential{Uid: uint32(uid), Gid: uint32(gid)}
		if err := os.Chown(dir, uid, gid); err != nil {
			t.Fatal(err)
		}
	}
	if err := os.Chmod(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	run := func(name string, args ...string) {
		t.Helper()
		cmd := exec.Command(filepath.Join(bin, name), args...)
		cmd.Dir = dir
		cmd.Env = append(os.Environ(), "LC_ALL=C", "HOME="+dir)
		if cred != nil {
			cmd.SysProcAttr = &syscall.SysProcAttr{Credential: cred}
		}
		if out, err := cmd.CombinedOutput(); err != nil {
			t.Fatalf("%s %s: %v\n%s", name, strings.Join(args, " "), err, out)
		}
	}
	data := filepath.Join(dir, "data")
	run("initdb", "-D", data, "-U", "postgres", "--auth=trust", "--no-locale", "-E", "UTF8", "--no-sync")
	port := freePort(t)
	opts := fmt.Sprintf("-p %d -k %s -c listen_addresses=127.0.0.1 -c fsync=off -c max_connections=40", port, dir)
	run("pg_ctl", "-D", data, "-o", opts, "-l", filepath.Join(dir, "server.log"), "-w", "-t", "60", "start")
	t.Cleanup(func() {
		cmd := exec.Command(filepath.Join(bin, "pg_ctl"), "-D", data, "-m", "immediate", "-w", "stop")
		if cred != nil {
			cmd.SysProcAttr = &syscall.SysProcAttr{Credential: cred}
		}
		if out, err := cmd.CombinedOutput(); err != nil {
			t.Logf("pg_ctl stop: %v\n%s", err, out)
		}
	})
	return fmt.Sprintf("postgres://postgres@127.0.0.1:%d/postgres?sslmode=disable", port)
}

// freePort is a TCP port of 127.0.0.1 free a moment ago.
func freePort(t testing.TB) int {
	t.Helper()
	l, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	return l.Addr().(*net.TCPAddr).Port
}
