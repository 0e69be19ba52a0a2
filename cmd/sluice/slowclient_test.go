package main

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"net"
	"net/http"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"sluice/api"
)

// slowAdmin is the admin token of the slow-client test.
const slowAdmin = "slow-client-test-admin-token"

// Slow clients cannot take the server: with the connection cap at 4,
// four clients trickling request bodies hold every slot, and a fifth
// connection is refused at once with a 503 problem (Retry-After), as are
// twenty more, while the open connections stay at the cap. The trickling
// bodies are cut off at their read deadline (api.BodyReadTimeout of the
// declared size) with a 408, which frees the slots, and a normal request
// is answered again. A request without a valid token, or declaring a body
// over the limit, is answered (401, 413) before a byte of its body is
// sent, and its connection is closed.
func TestSlowClients(t *testing.T) {
	if testing.Short() {
		t.Skip("waits for the body read deadline (about 10 s)")
	}
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	const maxConns = 4
	cfg := &serveConfig{Addr: ln.Addr().String(), DataDir: t.TempDir(), BodyLimit: 1 << 20, AdminToken: slowAdmin,
		LogLevel: "info", FitWorkers: 1, Role: "api", ShutdownGrace: time.Second, MaxConns: maxConns}
	ctx, cancel := context.WithCancel(context.Background())
	logs := &lockedBuffer{}
	codes := make(chan int, 1)
	go func() { codes <- serve(ctx, cfg, ln, slog.New(slog.NewJSONHandler(logs, nil))) }()
	defer func() {
		cancel()
		if code := <-codes; code != 0 {
			t.Errorf("serve exited %d\n%s", code, logs)
		}
	}()
	addr := ln.Addr().String()
	waitServing(t, "http://"+addr)

	// Answered before the body: no token, a bad token, a body over the
	// limit. The body is never sent; the answer must come anyway, with
	// the connection closed after it.
	for _, c := range []struct {
		name, auth string
		length     int
		want       int
	}{
		{"no token", "", 100, 401},
		{"no token, large body", "", 900 << 10, 401},
		{"bad token", "Bearer slc_not-a-token", 100, 401},
		{"over the limit", "Bearer " + slowAdmin, 2 << 20, 413},
	} {
		conn := dial(t, addr)
		sendHead(t, conn, "/v1/assays", c.auth, c.length)
		resp := readResponse(t, conn, 3*time.Second)
		if resp.StatusCode != c.want || resp.Header.Get("Content-Type") != "application/problem+json" || !resp.Close {
			t.Errorf("%s: %d %s, close %v; want %d problem+json, closed", c.name, resp.StatusCode, resp.Header.Get("Content-Type"), resp.Close, c.want)
		}
		io.Copy(io.Discard, resp.Body)
		// The server closes its end at once (EOF), not when the body's
		// read deadline passes.
		conn.SetReadDeadline(time.Now().Add(time.Second))
		if _, err := conn.Read(make([]byte, 1)); !errors.Is(err, io.EOF) && !errors.Is(err, syscall.ECONNRESET) {
			t.Errorf("%s: the connection stays open after the answer (%v)", c.name, err)
		}
		conn.Close()
	}

	// Four slow clients with a valid token take every slot. A connection
	// the server closed keeps its slot for net/http's half a second of
	// lingering after the close: a slow client refused meanwhile (503 at
	// once) tries again.
	const bodyLen = 1000
	var slow []net.Conn
	start := time.Now()
	for tries := 0; len(slow) < maxConns; tries++ {
		if tries > 50 {
			t.Fatalf("only %d slow clients got a slot", len(slow))
		}
		conn := dial(t, addr)
		sendHead(t, conn, "/v1/assays", "Bearer "+slowAdmin, bodyLen)
		conn.SetReadDeadline(time.Now().Add(150 * time.Millisecond))
		if _, err := conn.Read(make([]byte, 1)); err == nil {
			conn.Close() // refused: answered at once
			time.Sleep(100 * time.Millisecond)
			continue
		}
		conn.SetReadDeadline(time.Time{})
		slow = append(slow, conn)
	}
	trickle := make(chan struct{})
	go func() {
		defer close(trickle)
		for i := 0; ; i++ {
			for _, c := range slow {
				c.SetWriteDeadline(time.Now().Add(time.Second))
				if _, err := c.Write([]byte{" {"[min(i, 1)]}); err != nil {
					return
				}
			}
			time.Sleep(200 * time.Millisecond)
			if time.Since(start) > 30*time.Second {
				return
			}
		}
	}()
	metric := func(name string) string {
		// /metrics needs a connection too: read it once a slot is free.
		return scrape(t, addr, name)
	}
	// Over the cap: a normal request, then twenty more connections, are
	// refused cleanly and at once.
	for i := range 21 {
		conn := dial(t, addr)
		if i == 0 {
			fmt.Fprintf(conn, "GET /healthz HTTP/1.1\r\nHost: sluice\r\n\r\n")
		}
		resp := readResponse(t, conn, 3*time.Second)
		if resp.StatusCode != 503 || resp.Header.Get("Retry-After") == "" || resp.Header.Get("Content-Type") != "application/problem+json" {
			t.Errorf("connection %d over the cap: %d %v", i+1, resp.StatusCode, resp.Header)
		}
		conn.Close()
	}
	// The slow bodies miss their deadline: 408, the connection closed.
	deadline := api.BodyReadTimeout(bodyLen)
	for i, c := range slow {
		resp := readResponse(t, c, deadline+5*time.Second)
		if resp.StatusCode != 408 || !resp.Close {
			t.Errorf("slow client %d: %d, close %v; want 408 and the connection closed", i, resp.StatusCode, resp.Close)
		}
		c.Close()
	}
	took := time.Since(start)
	<-trickle
	if took < deadline-time.Second {
		t.Errorf("slow clients cut off after %v; their deadline is %v", took, deadline)
	}
	t.Logf("slow clients cut off after %v (deadline %v)", took.Round(time.Millisecond), deadline)
	// The slots are free again: normal requests are answered, and the
	// metrics saw the cap hold.
	r, err := http.Get("http://" + addr + "/healthz")
	if err != nil || r.StatusCode != 200 {
		t.Fatalf("after the slow clients: %v %v", r, err)
	}
	r.Body.Close()
	if got := metric("sluice_http_connections_refused_total"); got != "21" {
		t.Errorf("refused connections counted: %s, want 21", got)
	}
	if got, err := strconv.Atoi(metric("sluice_http_connections_open")); err != nil || got > maxConns {
		t.Errorf("open connections: %d (%v), cap %d", got, err, maxConns)
	}
}

func waitServing(t *testing.T, base string) {
	t.Helper()
	deadline := time.Now().Add(30 * time.Second)
	for {
		r, err := http.Get(base + "/readyz")
		if err == nil {
			r.Body.Close()
			if r.StatusCode == 200 {
				http.DefaultClient.CloseIdleConnections()
				return
			}
		}
		if time.Now().After(deadline) {
			t.Fatalf("not ready: %v", err)
		}
		time.Sleep(50 * time.Millisecond)
	}
}

func dial(t *testing.T, addr string) net.Conn {
	t.Helper()
	c, err := net.Dial("tcp", addr)
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// sendHead sends a POST's request line and headers, declaring a body of
// length bytes, and none of the body.
func sendHead(t *testing.T, c net.Conn, path, auth string, length int) {
	t.Helper()
	h := "POST " + path + " HTTP/1.1\r\nHost: sluice\r\nContent-Type: application/json\r\n" +
		fmt.Sprintf("Content-Length: %d\r\n", length)
	if auth != "" {
		h += "Authorization: " + auth + "\r\n"
	}
	if _, err := io.WriteString(c, h+"\r\n"); err != nil {
		t.Fatal(err)
	}
}

func readResponse(t *testing.T, c net.Conn, wait time.Duration) *http.Response {
	t.Helper()
	c.SetReadDeadline(time.Now().Add(wait))
	resp, err := http.ReadResponse(bufio.NewReader(c), nil)
	if err != nil {
		t.Fatalf("no answer within %v: %v", wait, err)
	}
	return resp
}

// scrape returns the value of an unlabelled metric from /metrics.
func scrape(t *testing.T, addr, name string) string {
	t.Helper()
	r, err := http.Get("http://" + addr + "/metrics")
	if err != nil {
		t.Fatal(err)
	}
	defer r.Body.Close()
	b, _ := io.ReadAll(r.Body)
	for _, line := range strings.Split(string(b), "\n") {
		if v, ok := strings.CutPrefix(line, name+" "); ok {
			return v
		}
	}
	return ""
}
