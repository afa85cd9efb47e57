//go:build cgo && trendsqlext

/* The SQLite side of the trendsql loadable extension: the entry point, the
 * helpers Go calls, and the per-row aggregate callbacks that buffer rows in
 * C (the table-valued functions are in table.c). The functions themselves
 * run in Go (ext.go), called once per value an aggregate returns, once per
 * scalar call and once per table scan. */

#include "ext.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

SQLITE_EXTENSION_INIT1

/* ---- entry point ---- */

#ifdef _WIN32
__declspec(dllexport)
#endif
int sqlite3_trendsql_init(sqlite3 *db, char **pzErrMsg, const sqlite3_api_routines *pApi) {
  SQLITE_EXTENSION_INIT2(pApi);
  if (sqlite3_libversion_number() < EXT_MIN_SQLITE) {
    if (pzErrMsg) {
      *pzErrMsg = sqlite3_mprintf(
          "trendsql: this SQLite is %s; the extension needs 3.25.0 or later (window functions)",
          sqlite3_libversion());
    }
    return SQLITE_ERROR;
  }
  return trendsqlGoRegister(db, pzErrMsg);
}

const char *ext_db_errmsg(sqlite3 *db) { return sqlite3_errmsg(db); }

void ext_set_errmsg_owned(char **pz, char *msg) {
  if (pz) *pz = msg ? sqlite3_mprintf("%s", msg) : 0;
  free(msg);
}

/* ---- registration tables (allocated once, never freed: the library stays
 * loaded for the life of the process) ---- */

ext_func *ext_funcs_new(int n) { return (ext_func *)calloc((size_t)(n > 0 ? n : 1), sizeof(ext_func)); }

void ext_func_set(ext_func *f, int i, int index, int numbers, int first_boxed) {
  f[i].index = index;
  f[i].numbers = numbers;
  f[i].first_boxed = first_boxed;
}

ext_table *ext_table_new(int index, int ncols, int nargs, const char *schema) {
  ext_table *t = (ext_table *)calloc(1, sizeof(ext_table));
  if (t) {
    t->index = index;
    t->ncols = ncols;
    t->nargs = nargs;
    t->schema = schema;
  }
  return t;
}

/* ---- argument and result helpers for Go ---- */

int ext_arg_type(sqlite3_value **argv, int i) { return sqlite3_value_type(argv[i]); }
sqlite3_int64 ext_arg_int64(sqlite3_value **argv, int i) { return sqlite3_value_int64(argv[i]); }
double ext_arg_double(sqlite3_value **argv, int i) { return sqlite3_value_double(argv[i]); }

const char *ext_arg_text(sqlite3_value **argv, int i, int *len) {
  const char *p = (const char *)sqlite3_value_text(argv[i]);
  *len = sqlite3_value_bytes(argv[i]);
  return p;
}

const void *ext_arg_blob(sqlite3_value **argv, int i, int *len) {
  const void *p = sqlite3_value_blob(argv[i]);
  *len = sqlite3_value_bytes(argv[i]);
  return p;
}

void ext_result_null(sqlite3_context *ctx) { sqlite3_result_null(ctx); }
void ext_result_int64(sqlite3_context *ctx, sqlite3_int64 v) { sqlite3_result_int64(ctx, v); }
void ext_result_double(sqlite3_context *ctx, double v) { sqlite3_result_double(ctx, v); }

void ext_result_text_owned(sqlite3_context *ctx, char *p, int n) {
  if (!p) {
    sqlite3_result_error_nomem(ctx);
    return;
  }
  sqlite3_result_text(ctx, p, n, free);
}

void ext_result_blob_owned(sqlite3_context *ctx, void *p, int n) {
  if (n == 0) {
    free(p);
    sqlite3_result_zeroblob(ctx, 0);
    return;
  }
  if (!p) {
    sqlite3_result_error_nomem(ctx);
    return;
  }
  sqlite3_result_blob(ctx, p, n, free);
}

void ext_result_error_owned(sqlite3_context *ctx, char *msg) {
  if (!msg) {
    sqlite3_result_error_nomem(ctx);
    return;
  }
  sqlite3_result_error(ctx, msg, -1);
  free(msg);
}

/* ---- scalars ---- */

static void ext_scalar(sqlite3_context *ctx, int argc, sqlite3_value **argv) {
  ext_func *f = (ext_func *)sqlite3_user_data(ctx);
  trendsqlGoScalar(ctx, f->index, argc, argv);
}

int ext_register_scalar(sqlite3 *db, const char *name, int nargs, ext_func *f, int i) {
  return sqlite3_create_function_v2(db, name, nargs, SQLITE_UTF8 | SQLITE_DETERMINISTIC, &f[i], ext_scalar, 0, 0, 0);
}

/* ---- aggregates: the row log and the column arrays ---- */

#define EXT_BLOCK (1u << 16)
#define EXT_FIRST_ROWS 1024
#define EXT_MAX_ROWS (1u << 16)

/* log_reserve returns room for n more bytes at the end of the log. */
static unsigned char *log_reserve(ext_agg *a, size_t n) {
  ext_blk *b = a->tail;
  if (!b || b->len + n > b->cap) {
    size_t cap = n > EXT_BLOCK ? n : EXT_BLOCK;
    ext_blk *nb = (ext_blk *)sqlite3_malloc64(sizeof(ext_blk) + cap);
    if (!nb) return 0;
    nb->next = 0;
    nb->len = 0;
    nb->cap = cap;
    nb->data = (unsigned char *)(nb + 1);
    if (b) {
      b->next = nb;
    } else {
      a->head = nb;
      a->rpos = 0;
    }
    a->tail = nb;
    b = nb;
  }
  unsigned char *p = b->data + b->len;
  b->len += n;
  return p;
}

/* log_close_run records the open run of numbers rows in the log. */
static int log_close_run(ext_agg *a) {
  if (!a->pending) return 1;
  unsigned char *p = log_reserve(a, 1 + 4);
  if (!p) return 0;
  *p = EXT_STEP_NUMBERS;
  memcpy(p + 1, &a->pending, 4);
  a->pending = 0;
  return 1;
}

/* chunk_add appends an empty chunk of k columns, twice the last one's
 * capacity (up to EXT_MAX_ROWS rows). */
static ext_chunk *chunk_add(ext_agg *a, int k) {
  size_t cap = a->ctail ? 2 * a->ctail->cap : EXT_FIRST_ROWS;
  if (cap > EXT_MAX_ROWS) cap = EXT_MAX_ROWS;
  ext_chunk *c = (ext_chunk *)sqlite3_malloc64(sizeof(ext_chunk) + sizeof(double) * (sqlite3_uint64)k * cap);
  if (!c) return 0;
  c->next = 0;
  c->cap = cap;
  c->n = 0;
  double *d = (double *)(c + 1);
  for (int j = 0; j < 3; j++) c->col[j] = j < k ? d + (size_t)j * cap : 0;
  if (a->ctail) {
    a->ctail->next = c;
  } else {
    a->chead = c;
    a->rchunk = c;
    a->roff = 0;
  }
  a->ctail = c;
  return c;
}

/* chunks_reset empties the columns; keep holds on to the first chunk. */
static void chunks_reset(ext_agg *a, int keep) {
  ext_chunk *c = a->chead;
  if (c && keep) {
    c->n = 0;
    c = c->next;
    a->chead->next = 0;
  } else {
    a->chead = 0;
  }
  while (c) {
    ext_chunk *next = c->next;
    sqlite3_free(c);
    c = next;
  }
  a->ctail = a->chead;
  a->rchunk = a->chead;
  a->roff = 0;
  a->pending = 0;
}

static void log_drop_first(ext_agg *a) {
  ext_blk *b = a->head;
  if (!b) return;
  a->head = b->next;
  a->rpos = 0;
  if (!a->head) a->tail = 0;
  sqlite3_free(b);
}

static void log_clear(ext_agg *a) {
  while (a->head) log_drop_first(a);
}

/* Reading, for Go: ext_log_next returns the kind of the next record (0 at
 * the end of the log) and in *n its size: rows for EXT_STEP_NUMBERS, 1 for
 * EXT_INVERSE_NUMBERS, the body length in bytes for the others; then
 * ext_log_take_columns, ext_log_take_numbers or ext_log_take_body copies it
 * and moves on. Every block read is freed. The open run is closed by
 * agg_result before Go reads. */
int ext_log_next(ext_agg *a, int k, int *n) {
  (void)k;
  if (!a) return 0;
  while (a->head && a->rpos >= a->head->len) log_drop_first(a);
  if (!a->head) return 0;
  const unsigned char *p = a->head->data + a->rpos;
  uint32_t u = 1;
  if (p[0] != EXT_INVERSE_NUMBERS) memcpy(&u, p + 1, 4);
  *n = (int)u;
  return p[0];
}

/* ext_log_take_columns copies the rows of an EXT_STEP_NUMBERS record, one
 * column per destination (d0 for the first argument; d1 and d2 as k
 * needs). */
void ext_log_take_columns(ext_agg *a, int k, double *d0, double *d1, double *d2) {
  const unsigned char *p = a->head->data + a->rpos;
  uint32_t rows;
  memcpy(&rows, p + 1, 4);
  a->rpos += 5;
  double *dst[3] = {d0, d1, d2};
  if (k > 3) k = 3;
  size_t left = rows;
  while (left > 0 && a->rchunk) {
    ext_chunk *c = a->rchunk;
    size_t m = c->n - a->roff;
    if (m > left) m = left;
    for (int j = 0; j < k; j++) {
      memcpy(dst[j], c->col[j] + a->roff, sizeof(double) * m);
      dst[j] += m;
    }
    left -= m;
    a->roff += m;
    if (a->roff == c->n && c->next) {
      a->rchunk = c->next;
      a->roff = 0;
    }
  }
}

/* ext_log_take_numbers copies the k numbers of an EXT_INVERSE_NUMBERS
 * record. */
void ext_log_take_numbers(ext_agg *a, int k, double *dst) {
  const unsigned char *p = a->head->data + a->rpos;
  memcpy(dst, p + 1, 8 * (size_t)k);
  a->rpos += 1 + 8 * (size_t)k;
}

void ext_log_take_body(ext_agg *a, unsigned char *dst) {
  const unsigned char *p = a->head->data + a->rpos;
  uint32_t len;
  memcpy(&len, p + 1, 4);
  memcpy(dst, p + 5, len);
  a->rpos += 5 + len;
}

static size_t value_size(sqlite3_value *v) {
  switch (sqlite3_value_type(v)) {
    case SQLITE_INTEGER:
    case SQLITE_FLOAT:
      return 1 + 8;
    case SQLITE_TEXT:
      (void)sqlite3_value_text(v);
      return 1 + 4 + (size_t)sqlite3_value_bytes(v);
    case SQLITE_BLOB:
      (void)sqlite3_value_blob(v);
      return 1 + 4 + (size_t)sqlite3_value_bytes(v);
    default:
      return 1;
  }
}

static unsigned char *put_value(unsigned char *p, sqlite3_value *v) {
  int t = sqlite3_value_type(v);
  *p++ = (unsigned char)t;
  switch (t) {
    case SQLITE_INTEGER: {
      sqlite3_int64 x = sqlite3_value_int64(v);
      memcpy(p, &x, 8);
      return p + 8;
    }
    case SQLITE_FLOAT: {
      double x = sqlite3_value_double(v);
      memcpy(p, &x, 8);
      return p + 8;
    }
    case SQLITE_TEXT:
    case SQLITE_BLOB: {
      const void *d = t == SQLITE_TEXT ? (const void *)sqlite3_value_text(v) : sqlite3_value_blob(v);
      uint32_t n = (uint32_t)sqlite3_value_bytes(v);
      memcpy(p, &n, 4);
      if (n) memcpy(p + 4, d, n);
      return p + 4 + n;
    }
    default:
      return p;
  }
}

/* same_value says whether two values are equal in SQL type and value. */
static int same_value(sqlite3_value *a, sqlite3_value *b) {
  int t = sqlite3_value_type(a);
  if (t != sqlite3_value_type(b)) return 0;
  switch (t) {
    case SQLITE_INTEGER:
      return sqlite3_value_int64(a) == sqlite3_value_int64(b);
    case SQLITE_FLOAT:
      return sqlite3_value_double(a) == sqlite3_value_double(b);
    case SQLITE_TEXT:
    case SQLITE_BLOB: {
      const void *pa = t == SQLITE_TEXT ? (const void *)sqlite3_value_text(a) : sqlite3_value_blob(a);
      const void *pb = t == SQLITE_TEXT ? (const void *)sqlite3_value_text(b) : sqlite3_value_blob(b);
      int na = sqlite3_value_bytes(a), nb = sqlite3_value_bytes(b);
      return na == nb && (na == 0 || memcmp(pa, pb, (size_t)na) == 0);
    }
    default:
      return 1;
  }
}

static void agg_row(sqlite3_context *ctx, ext_agg *a, int argc, sqlite3_value **argv, int inverse) {
  if (!a) {
    sqlite3_result_error_nomem(ctx);
    return;
  }
  const ext_func *f = a->f;
  if (!f) f = a->f = (const ext_func *)sqlite3_user_data(ctx);
  int k = f->numbers;
  /* A row of plain numbers: the leading k arguments are finite INTEGER or
   * REAL values or NULL, and (when the first row is logged as values) the
   * rest equal that first row's. Each value's type is read once. */
  if (k > 0 && k <= 3 && argc >= k && (!f->first_boxed || (a->started && argc == a->argc0))) {
    double v[3];
    int ok = 1, null = 0;
    for (int i = 0; ok && i < k; i++) {
      switch (sqlite3_value_type(argv[i])) {
        case SQLITE_FLOAT:
          v[i] = sqlite3_value_double(argv[i]);
          ok = isfinite(v[i]);
          break;
        case SQLITE_INTEGER:
          v[i] = (double)sqlite3_value_int64(argv[i]);
          break;
        case SQLITE_NULL:
          null = 1;
          break;
        default:
          ok = 0;
      }
    }
    if (ok && f->first_boxed) {
      for (int j = k; ok && j < argc; j++) ok = same_value(argv[j], a->opts[j - k]);
    }
    if (ok && null && (f->first_boxed || k == argc)) {
      /* A regression aggregate skips a row with a NULL value. A series
       * aggregate keeps the time of a row whose value is NULL (it marks a
       * slot of the time grid), and a NULL time is an error: leave those
       * rows to Go. */
      if (!f->first_boxed) return;
      ok = 0;
    }
    if (ok) {
      if (!inverse) {
        ext_chunk *c = a->ctail;
        if ((!c || c->n == c->cap) && !(c = chunk_add(a, k))) {
          sqlite3_result_error_nomem(ctx);
          return;
        }
        if (a->pending == UINT32_MAX && !log_close_run(a)) {
          sqlite3_result_error_nomem(ctx);
          return;
        }
        size_t r = c->n++;
        c->col[0][r] = v[0];
        if (k > 1) c->col[1][r] = v[1];
        if (k > 2) c->col[2][r] = v[2];
        a->pending++;
        /* Rows of two arguments and nothing else now take agg_step's short
         * path. */
        a->pair = k == 2 && argc == 2;
        return;
      }
      unsigned char *p = log_close_run(a) ? log_reserve(a, 1 + 8 * (size_t)k) : 0;
      if (!p) {
        sqlite3_result_error_nomem(ctx);
        return;
      }
      *p++ = EXT_INVERSE_NUMBERS;
      memcpy(p, v, 8 * (size_t)k);
      return;
    }
  }
  if (f->first_boxed && !a->started && !inverse) {
    a->started = 1;
    a->argc0 = argc;
    if (argc > k && k > 0) {
      a->opts = (sqlite3_value **)sqlite3_malloc64(sizeof(sqlite3_value *) * (size_t)(argc - k));
      if (!a->opts) {
        sqlite3_result_error_nomem(ctx);
        return;
      }
      a->nopts = argc - k;
      for (int j = 0; j < a->nopts; j++) {
        a->opts[j] = sqlite3_value_dup(argv[k + j]);
        if (!a->opts[j]) {
          a->nopts = j;
          a->argc0 = -1; /* no row of plain numbers in this group */
          break;
        }
      }
    }
  }
  size_t body = 4;
  for (int i = 0; i < argc; i++) body += value_size(argv[i]);
  unsigned char *p = log_close_run(a) ? log_reserve(a, 1 + 4 + body) : 0;
  if (!p) {
    sqlite3_result_error_nomem(ctx);
    return;
  }
  *p++ = inverse ? EXT_INVERSE_VALUES : EXT_STEP_VALUES;
  uint32_t u = (uint32_t)body;
  memcpy(p, &u, 4);
  p += 4;
  u = (uint32_t)argc;
  memcpy(p, &u, 4);
  p += 4;
  for (int i = 0; i < argc; i++) p = put_value(p, argv[i]);
}

/* number_arg reads a finite INTEGER or REAL argument into *x. */
static inline int number_arg(sqlite3_value *v, double *x) {
  switch (sqlite3_value_type(v)) {
    case SQLITE_INTEGER:
      *x = (double)sqlite3_value_int64(v);
      return 1;
    case SQLITE_FLOAT:
      *x = sqlite3_value_double(v);
      return isfinite(*x);
    default:
      return 0;
  }
}

/* agg_step's short path takes a row of two plain numbers once a row of that
 * shape has been stored (a->pair; for a series aggregate that means the
 * group's first row was two arguments, so there are no options to compare)
 * and the last chunk has room; every other row goes to agg_row. */
static void agg_step(sqlite3_context *ctx, int argc, sqlite3_value **argv) {
  ext_agg *a = (ext_agg *)sqlite3_aggregate_context(ctx, sizeof(ext_agg));
  if (a && a->pair && argc == 2) {
    ext_chunk *c = a->ctail;
    double x, y;
    if (c->n < c->cap && a->pending < UINT32_MAX && number_arg(argv[0], &x) && number_arg(argv[1], &y)) {
      size_t r = c->n++;
      c->col[0][r] = x;
      c->col[1][r] = y;
      a->pending++;
      return;
    }
  }
  agg_row(ctx, a, argc, argv, 0);
}

static void agg_inverse(sqlite3_context *ctx, int argc, sqlite3_value **argv) {
  agg_row(ctx, (ext_agg *)sqlite3_aggregate_context(ctx, sizeof(ext_agg)), argc, argv, 1);
}

/* yield_due says whether this value's call into Go should let the Go
 * scheduler run once (runtime.Gosched), which it asks for at most every
 * EXT_YIELD_NS per thread. The reason is the Go runtime's monitor thread:
 * it takes the Go processor back from a thread that is outside Go when that
 * processor has gone 10 ms without scheduling a goroutine, and a thread that
 * enters Go only through these calls never schedules one. Without the
 * yield, every call after the first 10 ms of a query finds its processor
 * taken, and each return to C wakes the monitor, which takes it again and
 * polls every 20 µs (BENCHMARKS.md has the cost). A yield costs a few thread switches; at most one per 5 ms keeps
 * the processor with the thread. */
#define EXT_YIELD_NS 5000000
static int yield_due(void) {
#if defined(CLOCK_MONOTONIC) && !defined(_WIN32)
  static _Thread_local long long last;
  struct timespec ts;
  if (clock_gettime(CLOCK_MONOTONIC, &ts) != 0) return 0;
  long long now = (long long)ts.tv_sec * 1000000000LL + ts.tv_nsec;
  if (last != 0 && now - last < EXT_YIELD_NS) return 0;
  last = now;
  return 1;
#else
  return 0;
#endif
}

static void agg_result(sqlite3_context *ctx, int final) {
  ext_func *f = (ext_func *)sqlite3_user_data(ctx);
  ext_agg *a = (ext_agg *)sqlite3_aggregate_context(ctx, 0);
  if (a && !log_close_run(a)) {
    sqlite3_result_error_nomem(ctx);
  } else {
    trendsqlGoAggResult(ctx, f->index, a, final, yield_due());
  }
  if (!a) return;
  log_clear(a);
  chunks_reset(a, !final);
  if (final) {
    if (a->group) trendsqlGoAggRelease(a->group);
    a->group = 0;
    for (int j = 0; j < a->nopts; j++) sqlite3_value_free(a->opts[j]);
    sqlite3_free(a->opts);
    a->opts = 0;
    a->nopts = 0;
  }
}

static void agg_value(sqlite3_context *ctx) { agg_result(ctx, 0); }
static void agg_final(sqlite3_context *ctx) { agg_result(ctx, 1); }

int ext_register_aggregate(sqlite3 *db, const char *name, int nargs, ext_func *f, int i) {
  return sqlite3_create_window_function(db, name, nargs, SQLITE_UTF8 | SQLITE_DETERMINISTIC, &f[i], agg_step,
                                        agg_final, agg_value, agg_inverse, 0);
}
