package workspace

import (
	"context"
	"errors"

	"unshelved/store"
)

// finishRun records the final status of a run and returns err (or the
// error of recording it). It uses a fresh context so that a cancelled run
// is still recorded as cancelled.
func finishRun(db *store.DB, runID int64, ctx context.Context, err error) error {
	status := store.RunComplete
	switch {
	case err != nil && (errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded) || ctx.Err() != nil):
		status = store.RunCancelled
	case err != nil:
		status = store.RunFailed
	}
	if ferr := db.FinishRun(context.WithoutCancel(ctx), runID, status); ferr != nil && err == nil {
		return ferr
	}
	return err
}
