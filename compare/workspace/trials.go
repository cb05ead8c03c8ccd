package workspace

import (
	"context"
	"time"

	"unshelved/compare/funders"
	"unshelved/store"
)

// FunderQuery is the funders' view of the registered trials that pass the
// filter: results posted or not, on time or not, publication linked or
// not, months since completion counted to asOf when nothing is posted.
func FunderQuery(ctx context.Context, db *store.DB, f store.TrialFilter, asOf time.Time) (funders.FunderReport, error) {
	summaries, err := db.TrialSummaries(ctx, f)
	if err != nil {
		return funders.FunderReport{}, err
	}
	return funders.FunderView(summaries, funders.FunderOptions{AsOf: asOf, Sponsor: f.Sponsor}), nil
}
