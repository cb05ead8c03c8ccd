// Package storetest helps tests of other packages look inside a workspace
// database. It is for tests only: nothing in the tool imports it.
package storetest

import (
	"bufio"
	"context"
	"database/sql"
	"fmt"
	"io"
	"strconv"
	"strings"

	_ "github.com/mattn/go-sqlite3" // the SQLite driver the store uses
)

// Dump writes every table's content of the workspace database at path as
// text: a "# table (columns)" line, then one tab-separated line per row,
// rows sorted by all their columns. Columns named *_at (wall-clock times)
// are left out, so two databases built from the same inputs dump
// identically. Texts are quoted, NULL is written as NULL and numbers in
// their shortest exact form. The file is opened read-only, beside any
// open store.DB.
func Dump(ctx context.Context, path string, w io.Writer) error {
	db, err := sql.Open("sqlite3", "file:"+path+"?mode=ro&_busy_timeout=5000")
	if err != nil {
		return fmt.Errorf("dump %s: %w", path, err)
	}
	defer db.Close()
	tx, err := db.BeginTx(ctx, &sql.TxOptions{ReadOnly: true})
	if err != nil {
		return fmt.Errorf("dump %s: %w", path, err)
	}
	defer tx.Rollback() //nolint:errcheck // read-only
	var tables []string
	err = eachRow(ctx, tx, `SELECT name FROM sqlite_schema WHERE type = 'table' AND name NOT LIKE 'sqlite_%' ORDER BY name`,
		nil, func(r *sql.Rows) error {
			var name string
			if err := r.Scan(&name); err != nil {
				return err
			}
			tables = append(tables, name)
			return nil
		})
	if err != nil {
		return fmt.Errorf("dump: list tables: %w", err)
	}
	bw := bufio.NewWriter(w)
	for _, table := range tables {
		var cols []string
		err := eachRow(ctx, tx, `SELECT name FROM pragma_table_info(?) ORDER BY cid`, []any{table},
			func(r *sql.Rows) error {
				var name string
				if err := r.Scan(&name); err != nil {
					return err
				}
				if !strings.HasSuffix(name, "_at") {
					cols = append(cols, name)
				}
				return nil
			})
		if err != nil {
			return fmt.Errorf("dump %s: columns: %w", table, err)
		}
		fmt.Fprintf(bw, "# %s (%s)\n", table, strings.Join(cols, ", "))
		// Table and column names come from the schema, not from input.
		q := `SELECT "` + strings.Join(cols, `", "`) + `" FROM "` + table + `" ORDER BY ` + orderAll(len(cols))
		vals := make([]any, len(cols))
		ptrs := make([]any, len(cols))
		for i := range vals {
			ptrs[i] = &vals[i]
		}
		err = eachRow(ctx, tx, q, nil, func(r *sql.Rows) error {
			if err := r.Scan(ptrs...); err != nil {
				return err
			}
			for i, v := range vals {
				if i > 0 {
					bw.WriteByte('\t')
				}
				bw.WriteString(dumpValue(v))
			}
			bw.WriteByte('\n')
			return nil
		})
		if err != nil {
			return fmt.Errorf("dump %s: %w", table, err)
		}
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("dump: write: %w", err)
	}
	return nil
}

func orderAll(n int) string {
	parts := make([]string, n)
	for i := range parts {
		parts[i] = strconv.Itoa(i + 1)
	}
	return strings.Join(parts, ", ")
}

func dumpValue(v any) string {
	switch x := v.(type) {
	case nil:
		return "NULL"
	case int64:
		return strconv.FormatInt(x, 10)
	case float64:
		return strconv.FormatFloat(x, 'g', -1, 64)
	case string:
		return strconv.Quote(x)
	case []byte:
		return strconv.Quote(string(x))
	case bool:
		return strconv.FormatBool(x)
	}
	return fmt.Sprintf("%v", v)
}

func eachRow(ctx context.Context, tx *sql.Tx, query string, args []any, scan func(*sql.Rows) error) error {
	rows, err := tx.QueryContext(ctx, query, args...)
	if err != nil {
		return err
	}
	defer rows.Close()
	for rows.Next() {
		if err := scan(rows); err != nil {
			return err
		}
	}
	return rows.Err()
}
