//go:build cgo && trendsqlext

/* The table-valued functions of the trendsql loadable extension: an
 * eponymous-only virtual table per function, whose arguments are HIDDEN
 * columns constrained with "="; the rows come from Go (ext.go), once per
 * scan. */

#include "ext.h"

#include <stdlib.h>
#include <string.h>

SQLITE_EXTENSION_INIT3

typedef struct tv_vtab {
  sqlite3_vtab base;
  ext_table *t;
} tv_vtab;

typedef struct tv_cursor {
  sqlite3_vtab_cursor base;
  uintptr_t rows; /* Go handle of the rows, 0 = none */
  int nrows, i;
  sqlite3_value **args; /* copies of the argument values */
  int nargs;
} tv_cursor;

static int tv_connect(sqlite3 *db, void *aux, int argc, const char *const *argv, sqlite3_vtab **pp, char **err) {
  ext_table *t = (ext_table *)aux;
  (void)argc;
  (void)argv;
  int rc = sqlite3_declare_vtab(db, t->schema);
  if (rc != SQLITE_OK) {
    *err = sqlite3_mprintf("%s", sqlite3_errmsg(db));
    return rc;
  }
  tv_vtab *v = (tv_vtab *)sqlite3_malloc(sizeof(tv_vtab));
  if (!v) return SQLITE_NOMEM;
  memset(v, 0, sizeof *v);
  v->t = t;
  *pp = &v->base;
  return SQLITE_OK;
}

static int tv_disconnect(sqlite3_vtab *vt) {
  sqlite3_free(vt);
  return SQLITE_OK;
}

/* Every argument column needs a usable "=" constraint; a plan without one
 * is made very expensive so that SQLite picks one that binds them, and
 * xFilter reports the missing arguments if none exists. */
static int tv_best_index(sqlite3_vtab *vt, sqlite3_index_info *info) {
  ext_table *t = ((tv_vtab *)vt)->t;
  int have[32];
  int nargs = t->nargs < 32 ? t->nargs : 32;
  for (int a = 0; a < nargs; a++) have[a] = -1;
  for (int i = 0; i < info->nConstraint; i++) {
    const struct sqlite3_index_constraint *c = &info->aConstraint[i];
    int arg = c->iColumn - t->ncols;
    if (arg < 0 || arg >= nargs || c->op != SQLITE_INDEX_CONSTRAINT_EQ || !c->usable) continue;
    have[arg] = i;
  }
  int mask = 0;
  for (int a = 0; a < nargs; a++) {
    if (have[a] >= 0) mask |= 1 << a;
  }
  info->idxNum = mask;
  if (mask != (1 << nargs) - 1) {
    info->estimatedCost = 1e30;
    return SQLITE_OK;
  }
  for (int a = 0; a < nargs; a++) {
    info->aConstraintUsage[have[a]].argvIndex = a + 1;
    info->aConstraintUsage[have[a]].omit = 1;
  }
  info->estimatedCost = 10;
  info->estimatedRows = 50;
  return SQLITE_OK;
}

static int tv_open(sqlite3_vtab *vt, sqlite3_vtab_cursor **pp) {
  tv_cursor *c = (tv_cursor *)sqlite3_malloc(sizeof(tv_cursor));
  (void)vt;
  if (!c) return SQLITE_NOMEM;
  memset(c, 0, sizeof *c);
  *pp = &c->base;
  return SQLITE_OK;
}

static void tv_reset(tv_cursor *c) {
  if (c->rows) trendsqlGoTableRelease(c->rows);
  c->rows = 0;
  c->nrows = 0;
  c->i = 0;
  for (int j = 0; j < c->nargs; j++) sqlite3_value_free(c->args[j]);
  sqlite3_free(c->args);
  c->args = 0;
  c->nargs = 0;
}

static int tv_close(sqlite3_vtab_cursor *cur) {
  tv_reset((tv_cursor *)cur);
  sqlite3_free(cur);
  return SQLITE_OK;
}

static int popcount(int m) {
  int n = 0;
  for (; m; m &= m - 1) n++;
  return n;
}

static int tv_filter(sqlite3_vtab_cursor *cur, int idxNum, const char *idxStr, int argc, sqlite3_value **argv) {
  tv_cursor *c = (tv_cursor *)cur;
  ext_table *t = ((tv_vtab *)cur->pVtab)->t;
  (void)idxStr;
  tv_reset(c);
  int given = popcount(idxNum);
  if (argc > 0) {
    c->args = (sqlite3_value **)sqlite3_malloc64(sizeof(sqlite3_value *) * (size_t)argc);
    if (!c->args) return SQLITE_NOMEM;
    for (int j = 0; j < argc; j++) {
      c->args[j] = sqlite3_value_dup(argv[j]);
      if (!c->args[j]) {
        c->nargs = j;
        return SQLITE_NOMEM;
      }
    }
    c->nargs = argc;
  }
  char *err = trendsqlGoTableFilter(t->index, given, argc, argv, &c->rows, &c->nrows);
  if (err) {
    sqlite3_free(cur->pVtab->zErrMsg);
    cur->pVtab->zErrMsg = sqlite3_mprintf("%s", err);
    free(err);
    return SQLITE_ERROR;
  }
  return SQLITE_OK;
}

static int tv_next(sqlite3_vtab_cursor *cur) {
  ((tv_cursor *)cur)->i++;
  return SQLITE_OK;
}

static int tv_eof(sqlite3_vtab_cursor *cur) {
  tv_cursor *c = (tv_cursor *)cur;
  return c->i >= c->nrows;
}

static int tv_column(sqlite3_vtab_cursor *cur, sqlite3_context *ctx, int col) {
  tv_cursor *c = (tv_cursor *)cur;
  ext_table *t = ((tv_vtab *)cur->pVtab)->t;
  if (col >= t->ncols) {
    int j = col - t->ncols;
    if (j < c->nargs) {
      sqlite3_result_value(ctx, c->args[j]);
    } else {
      sqlite3_result_null(ctx);
    }
    return SQLITE_OK;
  }
  trendsqlGoTableColumn(ctx, c->rows, c->i, col);
  return SQLITE_OK;
}

static int tv_rowid(sqlite3_vtab_cursor *cur, sqlite3_int64 *rowid) {
  *rowid = ((tv_cursor *)cur)->i + 1;
  return SQLITE_OK;
}

static sqlite3_module tv_module = {
    0,             /* iVersion */
    0,             /* xCreate: none, so the table is eponymous-only */
    tv_connect,    /* xConnect */
    tv_best_index, /* xBestIndex */
    tv_disconnect, /* xDisconnect */
    tv_disconnect, /* xDestroy */
    tv_open,       /* xOpen */
    tv_close,      /* xClose */
    tv_filter,     /* xFilter */
    tv_next,       /* xNext */
    tv_eof,        /* xEof */
    tv_column,     /* xColumn */
    tv_rowid,      /* xRowid */
};

int ext_register_table(sqlite3 *db, const char *name, ext_table *t) {
  return sqlite3_create_module_v2(db, name, &tv_module, t, 0);
}
