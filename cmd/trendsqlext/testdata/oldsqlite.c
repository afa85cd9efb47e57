/* Loads the extension library with a stand-in for SQLite 3.24.0's API
 * (only the routines the entry point uses before its version check) and
 * prints the entry point's return code and error message, for ext_test.go.
 * usage: oldsqlite LIBRARY */
#include <sqlite3ext.h>

#include <dlfcn.h>
#include <stdarg.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static int version_number(void) { return 3024000; }
static const char *version(void) { return "3.24.0"; }

static char *format(const char *f, ...) {
  va_list ap;
  va_start(ap, f);
  int n = vsnprintf(0, 0, f, ap);
  va_end(ap);
  char *s = malloc((size_t)n + 1);
  va_start(ap, f);
  vsnprintf(s, (size_t)n + 1, f, ap);
  va_end(ap);
  return s;
}

int main(int argc, char **argv) {
  if (argc != 2) return 2;
  void *h = dlopen(argv[1], RTLD_NOW);
  if (!h) {
    fprintf(stderr, "%s\n", dlerror());
    return 2;
  }
  int (*init)(sqlite3 *, char **, const sqlite3_api_routines *) =
      (int (*)(sqlite3 *, char **, const sqlite3_api_routines *))dlsym(h, "sqlite3_trendsql_init");
  if (!init) {
    fprintf(stderr, "no entry point sqlite3_trendsql_init\n");
    return 2;
  }
  sqlite3_api_routines api;
  memset(&api, 0, sizeof api);
  api.libversion_number = version_number;
  api.libversion = version;
  api.mprintf = format;
  char *err = 0;
  int rc = init(0, &err, &api);
  printf("%d %s\n", rc, err ? err : "");
  return 0;
}
