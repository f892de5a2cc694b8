package pgtest

import (
	"context"
	"os"
	"testing"

	"github.com/jackc/pgx/v5"
)

func TestMain(m *testing.M) {
	code := m.Run()
	StopShared()
	os.Exit(code)
}

// A role made by setup connects with the password from the password
// file, over the socket and over loopback TCP; the server survives Halt
// and Resume with its data.
func TestServer(t *testing.T) {
	SharedSetup = []string{"CREATE ROLE deck_probe LOGIN", "CREATE DATABASE probe OWNER deck_probe"}
	s := Shared(t)
	ctx := context.Background()
	if err := s.SetPassword(ctx, "deck_probe", "furnace-7"); err != nil {
		t.Fatal(err)
	}
	for _, url := range []string{s.URL("deck_probe", "probe", "sslmode=disable"), s.TCPURL("deck_probe", "probe", "sslmode=disable")} {
		c, err := pgx.Connect(ctx, url)
		if err != nil {
			t.Fatalf("%s: %v\n%s", url, err, s.Log())
		}
		var who string
		if err := c.QueryRow(ctx, "SELECT current_user").Scan(&who); err != nil || who != "deck_probe" {
			t.Fatalf("current_user %q, %v", who, err)
		}
		c.Close(ctx)
	}
	if err := s.Exec(ctx, "probe", "CREATE TABLE kept (x int)", "INSERT INTO kept VALUES (7)"); err != nil {
		t.Fatal(err)
	}
	if err := s.Halt(); err != nil {
		t.Fatal(err)
	}
	if _, err := pgx.Connect(ctx, s.URL("deck_probe", "probe")); err == nil {
		t.Fatal("connected to a halted server")
	}
	if err := s.Resume(); err != nil {
		t.Fatal(err)
	}
	if err := s.Exec(ctx, "probe", "SELECT 1/x FROM kept"); err != nil {
		t.Fatal(err)
	}
}
