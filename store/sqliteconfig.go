package store

// extern int sqlite3_config(int, ...);
// extern long long sqlite3_memory_used(void);
//
// // SQLITE_CONFIG_MEMSTATUS (9) off; sqlite3_config is variadic, which Go
// // cannot call directly.
// static int unshelvedMemstatusOff(void) { return sqlite3_config(9, 0); }
import "C"

// SQLite keeps memory statistics (sqlite3_memory_used and the soft heap
// limit, neither of which unshelved uses) by taking a global mutex around
// every allocation it makes, and the driver has SQLite copy each bound
// text into such an allocation: the writer paid for a lock and an unlock
// per value. With the statistics off, BenchmarkWriteTrials stored about
// 1.2x the rows per second (interleaved runs). The setting has to precede
// SQLite's initialization, which the first connection triggers, so it is
// made when this package is initialized, before any connection can exist.
var memstatusConfig = int(C.unshelvedMemstatusOff())

// sqliteMemoryUsed is SQLite's own count of the memory it holds: 0 while
// the statistics are off.
func sqliteMemoryUsed() int64 { return int64(C.sqlite3_memory_used()) }
