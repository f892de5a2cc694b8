package store

import "context"

// openLegacy builds a database as an undercool of schema version v made it
// before the application_id: the migrations up to v, no mark.
func openLegacy(ctx context.Context, path string, v int) (*DB, error) {
	db, err := open(ctx, path, v)
	if err != nil {
		return nil, err
	}
	if _, err := db.sql.ExecContext(ctx, "PRAGMA application_id = 0"); err != nil {
		db.Close()
		return nil, err
	}
	return db, nil
}
