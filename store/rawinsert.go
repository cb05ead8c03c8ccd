package store

// #include <stdint.h>
// #include <stdlib.h>
// #include <stddef.h>
//
// typedef struct sqlite3 sqlite3;
// typedef struct sqlite3_stmt sqlite3_stmt;
// extern int sqlite3_prepare_v3(sqlite3 *, const char *, int, unsigned int, sqlite3_stmt **, const char **);
// extern int sqlite3_bind_int64(sqlite3_stmt *, int, long long);
// extern int sqlite3_bind_double(sqlite3_stmt *, int, double);
// extern int sqlite3_bind_text(sqlite3_stmt *, int, const char *, int, void (*)(void *));
// extern int sqlite3_step(sqlite3_stmt *);
// extern int sqlite3_reset(sqlite3_stmt *);
// extern int sqlite3_clear_bindings(sqlite3_stmt *);
// extern int sqlite3_finalize(sqlite3_stmt *);
// extern const char *sqlite3_errmsg(sqlite3 *);
//
// // Binds n values (kinds: 1 integer, 2 real, 3 text at blob+ints[i] of
// // lens[i] bytes), steps the statement once and resets it, all in one call
// // from Go. Texts are bound SQLITE_STATIC: blob stays valid (pinned by
// // cgo) until the bindings are cleared before returning. Returns 0 or
// // SQLite's error code.
// static int unshelvedInsert(sqlite3_stmt *st, int n, const int32_t *ords, const uint8_t *kinds,
//                            const int64_t *ints, const double *reals, const int32_t *lens, const char *blob) {
// 	int rc = 0;
// 	for (int i = 0; i < n && rc == 0; i++) {
// 		switch (kinds[i]) {
// 		case 1: rc = sqlite3_bind_int64(st, ords[i], ints[i]); break;
// 		case 2: rc = sqlite3_bind_double(st, ords[i], reals[i]); break;
// 		default: rc = sqlite3_bind_text(st, ords[i], blob + ints[i], lens[i], (void (*)(void *))0); break;
// 		}
// 	}
// 	if (rc == 0) {
// 		rc = sqlite3_step(st);
// 		if (rc == 101) rc = 0; /* SQLITE_DONE */
// 	}
// 	sqlite3_reset(st);
// 	sqlite3_clear_bindings(st);
// 	return rc;
// }
//
// static int unshelvedPrepare(sqlite3 *db, const char *sql, sqlite3_stmt **st) {
// 	return sqlite3_prepare_v3(db, sql, -1, 1 /* SQLITE_PREPARE_PERSISTENT */, st, NULL);
// }
import "C"

import (
	"database/sql/driver"
	"errors"
	"fmt"
	"reflect"
	"unsafe"
)

// The writer's multi-row INSERTs are run here, on the driver connection's
// own SQLite handle, instead of through the driver's statements: the
// driver makes one call into C per bound value (plus SQLite copying each
// text), and for 4 million rows per GB of registry JSON those calls were a
// third of the single writer's time, the limit of a whole load. This
// binds a statement's values and steps it in one call, texts without a
// copy. Everything else (transactions, lookups, deletes) still goes
// through the driver, on the same connection.
//
// The handle is the driver connection's unexported db field (mattn's
// *SQLiteConn), found by name; when it is not there (another driver
// version), rawHandle returns nil and the writer uses the driver's
// statements as before. TestRawInsertPathInUse fails if that happens.

// rawHandle returns the sqlite3* behind a mattn driver connection, or nil.
func rawHandle(dc any) unsafe.Pointer {
	v := reflect.ValueOf(dc)
	if v.Kind() != reflect.Pointer || v.IsNil() || v.Elem().Kind() != reflect.Struct {
		return nil
	}
	f := v.Elem().FieldByName("db")
	if !f.IsValid() || f.Kind() != reflect.Pointer {
		return nil
	}
	return *(*unsafe.Pointer)(unsafe.Pointer(f.UnsafeAddr()))
}

// rawStmt is a statement prepared on the raw handle.
type rawStmt struct {
	db unsafe.Pointer
	st *C.sqlite3_stmt
}

func rawPrepare(db unsafe.Pointer, query string) (*rawStmt, error) {
	cq := C.CString(query)
	defer C.free(unsafe.Pointer(cq))
	var st *C.sqlite3_stmt
	if rc := C.unshelvedPrepare((*C.sqlite3)(db), cq, &st); rc != 0 {
		return nil, rawError((*C.sqlite3)(db), rc)
	}
	return &rawStmt{db: db, st: st}, nil
}

func (s *rawStmt) close() {
	if s != nil && s.st != nil {
		C.sqlite3_finalize(s.st)
		s.st = nil
	}
}

func rawError(db *C.sqlite3, rc C.int) error {
	return fmt.Errorf("sqlite3: %s (code %d)", C.GoString(C.sqlite3_errmsg(db)), int(rc))
}

// rawArgs holds one statement's values in the flat form unshelvedInsert
// reads; reused from statement to statement.
type rawArgs struct {
	ords  []int32
	kinds []uint8
	ints  []int64
	reals []float64
	lens  []int32
	blob  []byte
}

func (a *rawArgs) reset() {
	a.ords, a.kinds, a.ints, a.reals, a.lens, a.blob = a.ords[:0], a.kinds[:0], a.ints[:0], a.reals[:0], a.lens[:0], a.blob[:0]
}

var errRawValue = errors.New("value of a type the raw insert does not bind")

func (a *rawArgs) add(ord int, v driver.Value) error {
	var k uint8
	var i int64
	var r float64
	var n int32
	switch v := v.(type) {
	case int64:
		k, i = 1, v
	case float64:
		k, r = 2, v
	case string:
		k, i, n = 3, int64(len(a.blob)), int32(len(v))
		a.blob = append(a.blob, v...)
	default:
		return fmt.Errorf("%w: %T", errRawValue, v)
	}
	a.ords = append(a.ords, int32(ord))
	a.kinds = append(a.kinds, k)
	a.ints = append(a.ints, i)
	a.reals = append(a.reals, r)
	a.lens = append(a.lens, n)
	return nil
}

// exec binds a's values to s, steps it once and resets it.
func (s *rawStmt) exec(a *rawArgs) error {
	n := len(a.ords)
	if n == 0 {
		return errors.New("raw insert without values")
	}
	var blob *C.char
	if len(a.blob) > 0 {
		blob = (*C.char)(unsafe.Pointer(&a.blob[0]))
	}
	rc := C.unshelvedInsert(s.st, C.int(n), (*C.int32_t)(unsafe.Pointer(&a.ords[0])), (*C.uint8_t)(unsafe.Pointer(&a.kinds[0])),
		(*C.int64_t)(unsafe.Pointer(&a.ints[0])), (*C.double)(unsafe.Pointer(&a.reals[0])),
		(*C.int32_t)(unsafe.Pointer(&a.lens[0])), blob)
	if rc != 0 {
		return rawError((*C.sqlite3)(s.db), rc)
	}
	return nil
}
