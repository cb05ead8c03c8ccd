package store

import (
	"context"
	"strings"
	"testing"
)

// TestTableKindsMatchSchema checks the writer's column kinds against the
// schema: 't' is NOT NULL TEXT, 'i' NOT NULL INTEGER, 'n' a nullable
// column, so that an unbound value means what the writer intends.
func TestTableKindsMatchSchema(t *testing.T) {
	ctx := context.Background()
	db := mustOpen(t)
	for _, tab := range tables {
		t.Run(tab.name, func(t *testing.T) {
			type col struct {
				typ     string
				notNull bool
			}
			schema := map[string]col{}
			rows, err := db.read.QueryContext(ctx, "SELECT name, type, \"notnull\" FROM pragma_table_info(?)", tab.name)
			if err != nil {
				t.Fatal(err)
			}
			for rows.Next() {
				var name, typ string
				var notNull bool
				if err := rows.Scan(&name, &typ, &notNull); err != nil {
					t.Fatal(err)
				}
				schema[name] = col{strings.ToUpper(typ), notNull}
			}
			if err := rows.Close(); err != nil {
				t.Fatal(err)
			}
			names := strings.Split(tab.columns, ",")
			if got, want := len(names)+1, len(schema); got != want {
				t.Errorf("writer names %d columns, table has %d", got, want)
			}
			for i, name := range names {
				name = strings.TrimSpace(name)
				c, ok := schema[name]
				if !ok {
					t.Errorf("column %s not in table", name)
					continue
				}
				var want string
				switch {
				case !c.notNull:
					want = "n"
				case c.typ == "TEXT":
					want = "t"
				case c.typ == "INTEGER":
					want = "i"
				default:
					t.Errorf("column %s: NOT NULL %s has no kind", name, c.typ)
					continue
				}
				if got := tab.kinds[i : i+1]; got != want {
					t.Errorf("column %s (%s, not null %v): kind %q, want %q", name, c.typ, c.notNull, got, want)
				}
			}
		})
	}
}
