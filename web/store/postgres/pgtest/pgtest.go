// Package pgtest gives tests a PostgreSQL schema of their own: created
// with a random name in the test database, named in the connection URL's
// search_path, dropped when the test ends.
//
// The test database is CAPBANK_TEST_DATABASE_URL, by default the
// machine's postgres://postgres@127.0.0.1:5432/test. When it cannot be
// reached a test is skipped with a plain message, except under CI=true,
// where it fails: CI runs on machines with PostgreSQL running.
package pgtest

import (
	"context"
	"crypto/rand"
	"encoding/hex"
	"net/url"
	"os"
	"testing"
	"time"

	"github.com/jackc/pgx/v5"
)

// DefaultURL is the test database when CAPBANK_TEST_DATABASE_URL is unset.
const DefaultURL = "postgres://postgres@127.0.0.1:5432/test?sslmode=disable"

// BaseURL is the test database's URL.
func BaseURL() string {
	if u := os.Getenv("CAPBANK_TEST_DATABASE_URL"); u != "" {
		return u
	}
	return DefaultURL
}

// Schema creates a fresh schema for t and returns the URL that selects it
// (search_path) for every connection of a pool opened on it.
func Schema(t testing.TB) string {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	base := BaseURL()
	conn, err := pgx.Connect(ctx, base)
	if err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("PostgreSQL is needed for this test and is not reachable at %s: %v (CI starts it in .ci/run)", base, err)
		}
		t.Skipf("skipped: PostgreSQL is not reachable at %s (%v); start it, or set CAPBANK_TEST_DATABASE_URL", base, err)
	}
	defer conn.Close(ctx)
	var b [8]byte
	rand.Read(b[:])
	schema := "capbank_test_" + hex.EncodeToString(b[:])
	if _, err := conn.Exec(ctx, `CREATE SCHEMA `+schema); err != nil {
		t.Fatalf("creating the test schema: %v", err)
	}
	t.Cleanup(func() {
		ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
		defer cancel()
		conn, err := pgx.Connect(ctx, base)
		if err != nil {
			t.Errorf("dropping the test schema %s: %v", schema, err)
			return
		}
		defer conn.Close(ctx)
		if _, err := conn.Exec(ctx, `DROP SCHEMA `+schema+` CASCADE`); err != nil {
			t.Errorf("dropping the test schema %s: %v", schema, err)
		}
	})
	u, err := url.Parse(base)
	if err != nil {
		t.Fatal(err)
	}
	q := u.Query()
	q.Set("search_path", schema)
	u.RawQuery = q.Encode()
	return u.String()
}
