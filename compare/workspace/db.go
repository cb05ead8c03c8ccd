package workspace

import (
	"context"

	"unshelved/store"
)

// DB is a workspace database. Commands reach it only through this
// package: OpenDB opens one, and the workflows take it.
type DB = store.DB

// Run is a stored audit, summary or scan run.
type Run = store.Run

// TrialFilter selects trials for FunderQuery.
type TrialFilter = store.TrialFilter

// RunComplete is the status of a run that finished.
const RunComplete = store.RunComplete

// OpenDB opens the workspace database at path, creating it (with its
// schema) when it does not exist; a file that may not be written is opened
// read-only (DB.ReadOnly).
func OpenDB(ctx context.Context, path string) (*DB, error) {
	return store.Open(ctx, path)
}
