package store

import (
	"context"
	"crypto/rand"
	"crypto/sha256"
	"database/sql"
	"encoding/hex"
	"strconv"
	"time"
)

// The ids that are the same on every copy of a sample or result (the
// deck's file, the plant database, an import), so that a row forwarded or
// imported twice is stored once:
//
//   - a sample with a curve file: the file's SHA-256, hex (64 characters).
//     The curve file is complete and final before it is stored, and its
//     metadata lines (sample, ladle, alloy, start time) are part of it, so
//     the same file is the same cup wherever it is stored.
//   - a sample without one (typed in): "n" and 32 hex digits from the
//     system's random source, made when it is first stored.
//   - a sample of an earlier undercool's database (uid added by migration
//     0006): the curve hash, or where there is none or an earlier sample
//     has it, "m" and the first 32 hex digits of the SHA-256 of its row id,
//     creation and recording times, sample and ladle, so that every copy of
//     an old file gets the same ids.
//   - a result: the first 32 hex digits of the SHA-256 of its sample's
//     uid, the site and deck that stored it, its analysis time
//     (timeLayout), limits version and record JSON; a result of an
//     earlier undercool's database (migration 0006) the same without the
//     site and deck.

// newSampleUID is the uid of a sample stored now.
func newSampleUID(curveSHA256 string) string {
	if curveSHA256 != "" {
		return curveSHA256
	}
	b := make([]byte, 16)
	rand.Read(b) // never fails (crypto/rand)
	return "n" + hex.EncodeToString(b)
}

// hashUID is the first 32 hex digits of the SHA-256 of the parts, each
// ended by a NUL byte.
func hashUID(parts ...string) string {
	h := sha256.New()
	for _, p := range parts {
		h.Write([]byte(p))
		h.Write([]byte{0})
	}
	return hex.EncodeToString(h.Sum(nil)[:16])
}

func resultUID(sampleUID, analysed, limitsVersion string, recordJSON []byte) string {
	return hashUID("result", sampleUID, analysed, limitsVersion, string(recordJSON))
}

// fillUIDs gives the rows of an earlier version (uid ”: from before
// migration 0006, or written since by an earlier undercool that had the
// file open) their uids, and puts their results in the outbox.
func (db *DB) fillUIDs(ctx context.Context) error {
	var n int
	if err := db.sql.QueryRowContext(ctx, `SELECT (SELECT count(*) FROM samples WHERE uid = '') + (SELECT count(*) FROM results WHERE uid = '')`).Scan(&n); err != nil {
		return db.fail("migrating", err)
	}
	if n == 0 {
		return nil
	}
	return db.write(ctx, "migrating", func(tx *sql.Tx) error {
		type old struct {
			id                                    int64
			sha, created, recorded, sample, ladle string
		}
		rows, err := tx.QueryContext(ctx, `SELECT id, curve_sha256, created_at, recorded_at, sample, ladle FROM samples WHERE uid = '' ORDER BY id`)
		if err != nil {
			return err
		}
		var olds []old
		for rows.Next() {
			var o old
			if err := rows.Scan(&o.id, &o.sha, &o.created, &o.recorded, &o.sample, &o.ladle); err != nil {
				rows.Close()
				return err
			}
			olds = append(olds, o)
		}
		rows.Close()
		for _, o := range olds {
			uid := o.sha
			var taken int
			if uid != "" {
				if err := tx.QueryRowContext(ctx, `SELECT count(*) FROM samples WHERE uid = ?`, uid).Scan(&taken); err != nil {
					return err
				}
			}
			if uid == "" || taken > 0 {
				uid = "m" + hashUID("sample", strconv.FormatInt(o.id, 10), o.created, o.recorded, o.sample, o.ladle)
			}
			if _, err := tx.ExecContext(ctx, `UPDATE samples SET uid = ? WHERE id = ?`, uid, o.id); err != nil {
				return err
			}
		}
		type res struct {
			id                          int64
			sampleUID, analysed, lv, js string
		}
		rows, err = tx.QueryContext(ctx, `SELECT r.id, s.uid, r.analysed_at, r.limits_version, r.record FROM results r JOIN samples s ON s.id = r.sample_id WHERE r.uid = '' ORDER BY r.id`)
		if err != nil {
			return err
		}
		var rs []res
		for rows.Next() {
			var r res
			if err := rows.Scan(&r.id, &r.sampleUID, &r.analysed, &r.lv, &r.js); err != nil {
				rows.Close()
				return err
			}
			rs = append(rs, r)
		}
		rows.Close()
		now := formatTime(time.Now())
		for _, r := range rs {
			uid := resultUID(r.sampleUID, r.analysed, r.lv, []byte(r.js))
			var taken int
			if err := tx.QueryRowContext(ctx, `SELECT count(*) FROM results WHERE uid = ?`, uid).Scan(&taken); err != nil {
				return err
			}
			if taken > 0 { // the same analysis stored twice in one millisecond
				uid = hashUID("result", uid, strconv.FormatInt(r.id, 10))
			}
			if _, err := tx.ExecContext(ctx, `UPDATE results SET uid = ? WHERE id = ?`, uid, r.id); err != nil {
				return err
			}
			if _, err := tx.ExecContext(ctx, queueSQL, r.id, now); err != nil {
				return err
			}
		}
		return nil
	})
}
