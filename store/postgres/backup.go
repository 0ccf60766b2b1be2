package postgres

import (
	"context"
	"errors"
	"fmt"
	"os"

	"github.com/foilrun/foilrun/store/sqlite"
)

// Backup writes a consistent copy of the whole log, read in one
// repeatable-read transaction while others may be writing, to a new
// SQLite file at path (the portable form of the log: `db copy` brings it
// back to a server). The copy is verified against the source by row
// counts and a SHA-256 of its content before it is kept; on any error the
// file is removed.
func (s *DB) Backup(ctx context.Context, path string) error {
	if _, err := os.Stat(path); err == nil {
		return fmt.Errorf("backup %q: the file exists; give a new file name", path)
	}
	dst, err := sqlite.Open(ctx, path)
	if err != nil {
		return fmt.Errorf("backup %q: %w", path, err)
	}
	_, err = s.CopyTo(ctx, dst, nil)
	err = errors.Join(err, dst.Close())
	if err != nil {
		for _, suffix := range []string{"", "-wal", "-shm"} {
			os.Remove(path + suffix)
		}
		return fmt.Errorf("backup %q: %w", path, err)
	}
	return nil
}
