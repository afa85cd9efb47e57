/* Declarations shared by ext.c and table.c (the SQLite side of the
 * extension) and ext.go (the Go side). Go never calls SQLite directly: in an
 * extension every SQLite routine is reached through the sqlite3_api
 * pointer, whose macros only C can expand, so ext.c wraps the few calls Go
 * needs. */
#ifndef TRENDSQL_EXT_H
#define TRENDSQL_EXT_H

#include <sqlite3ext.h>
#include <stddef.h>
#include <stdint.h>

/* Oldest SQLite the extension accepts: window functions
 * (sqlite3_create_window_function) appeared in 3.25.0. */
#define EXT_MIN_SQLITE 3025000

/* One registered function (user data of its SQLite registration). */
typedef struct ext_func {
  int index;       /* position in the Go side's function list */
  int numbers;     /* leading arguments a row may carry as plain numbers */
  int first_boxed; /* the group's first row is always logged as values */
} ext_func;

/* One table-valued function (client data of its module). */
typedef struct ext_table {
  int index;
  int ncols; /* visible columns */
  int nargs; /* hidden argument columns, after the visible ones */
  const char *schema;
} ext_table;

/* A block of the row log: whole records only. */
typedef struct ext_blk {
  struct ext_blk *next;
  size_t len, cap;
  unsigned char *data;
} ext_blk;

/* A chunk of numbers rows: k column arrays of cap doubles (allocated with
 * the header), n rows used. Chunks grow geometrically, so a group of n rows
 * takes about log2(n) chunks and no row is ever moved in C. */
typedef struct ext_chunk {
  struct ext_chunk *next;
  size_t cap, n;
  double *col[3];
} ext_chunk;

/* An aggregate group's state in sqlite3_aggregate_context memory. xStep and
 * xInverse append to it in C; Go reads and empties it when SQLite asks for
 * a value. A row of plain numbers goes into the column arrays (one array of
 * doubles per leading argument, grown geometrically) and is counted in the
 * open run; any other row closes the run (an EXT_STEP_NUMBERS record of its
 * row count) and is logged as a record after it, so the log keeps SQLite's
 * order. */
typedef struct ext_agg {
  ext_blk *head, *tail; /* records not yet handed to Go */
  size_t rpos;          /* read position in head */
  ext_chunk *chead, *ctail; /* the numbers rows, column by column */
  ext_chunk *rchunk;    /* read position in them: chunk and row */
  size_t roff;
  uint32_t pending;     /* rows of the open run (the last rows stored), not
                           yet recorded in the log */
  uintptr_t group;      /* Go handle of the group's state, 0 = none yet */
  int started;          /* the first row has been logged */
  int argc0;            /* that row's argument count */
  sqlite3_value **opts; /* copies of its trailing (option) arguments */
  int nopts;
  const ext_func *f;    /* the function (SQLite's user data), once read */
  int pair;             /* rows of two plain numbers take the short path */
} ext_agg;

/* Record kinds of the log (native byte order, no alignment). */
#define EXT_STEP_NUMBERS 'n'    /* u32 rows, stored in the column arrays */
#define EXT_INVERSE_NUMBERS 'm' /* k doubles */
#define EXT_STEP_VALUES 's'     /* u32 body length; body: u32 argc, argc values */
#define EXT_INVERSE_VALUES 'i'  /* the same */
/* A value: one byte of SQLite type, then INTEGER: int64, FLOAT: double,
 * TEXT/BLOB: u32 length and the bytes, NULL: nothing. */

/* Helpers for Go (ext.c). */
ext_func *ext_funcs_new(int n);
void ext_func_set(ext_func *f, int i, int index, int numbers, int first_boxed);
ext_table *ext_table_new(int index, int ncols, int nargs, const char *schema);
int ext_register_scalar(sqlite3 *db, const char *name, int nargs, ext_func *f, int i);
int ext_register_aggregate(sqlite3 *db, const char *name, int nargs, ext_func *f, int i);
int ext_register_table(sqlite3 *db, const char *name, ext_table *t);
const char *ext_db_errmsg(sqlite3 *db);
void ext_set_errmsg_owned(char **pz, char *msg);

int ext_log_next(ext_agg *a, int k, int *n);
void ext_log_take_numbers(ext_agg *a, int k, double *dst);
void ext_log_take_columns(ext_agg *a, int k, double *d0, double *d1, double *d2);
void ext_log_take_body(ext_agg *a, unsigned char *dst);

int ext_arg_type(sqlite3_value **argv, int i);
sqlite3_int64 ext_arg_int64(sqlite3_value **argv, int i);
double ext_arg_double(sqlite3_value **argv, int i);
const char *ext_arg_text(sqlite3_value **argv, int i, int *len);
const void *ext_arg_blob(sqlite3_value **argv, int i, int *len);

void ext_result_null(sqlite3_context *ctx);
void ext_result_int64(sqlite3_context *ctx, sqlite3_int64 v);
void ext_result_double(sqlite3_context *ctx, double v);
void ext_result_text_owned(sqlite3_context *ctx, char *p, int n);
void ext_result_blob_owned(sqlite3_context *ctx, void *p, int n);
void ext_result_error_owned(sqlite3_context *ctx, char *msg);

/* Go side (ext.go). */
extern int trendsqlGoRegister(sqlite3 *db, char **pzErrMsg);
extern void trendsqlGoScalar(sqlite3_context *ctx, int index, int argc, sqlite3_value **argv);
extern void trendsqlGoAggResult(sqlite3_context *ctx, int index, ext_agg *a, int final, int yield);
extern void trendsqlGoAggRelease(uintptr_t group);
extern char *trendsqlGoTableFilter(int index, int given, int argc, sqlite3_value **argv, uintptr_t *rows, int *nrows);
extern void trendsqlGoTableColumn(sqlite3_context *ctx, uintptr_t rows, int row, int col);
extern void trendsqlGoTableRelease(uintptr_t rows);

#endif
