// airshade_memory: two memory advices the Node CLI cannot give from JavaScript (issue 12). Node-API (C), built by
// node-gyp at `npm install` (scripts/build-native.mjs); the CLI runs without it, only slower
// (worker/runtime/native-memory.ts says how).
//
//   hugePages(view)          madvise(MADV_HUGEPAGE) over the whole pages inside the view's bytes: its memory is then
//                            backed by transparent huge pages as it is first touched (Linux, THP in "madvise" mode).
//                            What glibc's tunable glibc.malloc.hugetlb=1 does for every large allocation, here for one
//                            buffer, without starting Node again with the tunable.
//   release(view, from, to)  madvise(MADV_DONTNEED) over the whole pages between byte `from` (rounded down, never
//                            below the view's first whole page) and byte `to` (rounded down) of the view: the
//                            caller has no more use for the view's bytes before `to`, which read as zeros afterwards.
//                            The pages go back to the kernel at once, so the page cache a write is filling takes them
//                            while they are still warm, instead of fresh memory.
//
// Both return the bytes advised (0 where nothing whole lies in the range, or on another platform) and throw a
// TypeError or RangeError for bad arguments. Source for the calls: Linux madvise(2).
#include <node_api.h>
#include <stdint.h>
#include <stdbool.h>
#include <stdio.h>
#ifdef __linux__
#include <sys/mman.h>
#include <unistd.h>
#include <errno.h>
#include <string.h>
#endif

static bool view_bytes(napi_env env, napi_value v, uint8_t **data, size_t *length) {
  bool is_typed = false;
  if (napi_is_typedarray(env, v, &is_typed) != napi_ok || !is_typed) {
    napi_throw_type_error(env, NULL, "airshade_memory: expected a typed array");
    return false;
  }
  napi_typedarray_type type;
  size_t count, offset;
  void *p;
  napi_value buffer;
  if (napi_get_typedarray_info(env, v, &type, &count, &p, &buffer, &offset) != napi_ok) {
    napi_throw_type_error(env, NULL, "airshade_memory: cannot read the typed array");
    return false;
  }
  size_t size = 1;
  switch (type) {
    case napi_int16_array: case napi_uint16_array: size = 2; break;
    case napi_int32_array: case napi_uint32_array: case napi_float32_array: size = 4; break;
    case napi_float64_array: case napi_bigint64_array: case napi_biguint64_array: size = 8; break;
    default: size = 1;
  }
  *data = (uint8_t *)p;
  *length = count * size;
  return true;
}

static bool byte_arg(napi_env env, napi_value v, size_t limit, const char *name, size_t *out) {
  double d;
  if (napi_get_value_double(env, v, &d) != napi_ok || !(d >= 0) || d > (double)limit || d != (double)(size_t)d) {
    char text[96];
    snprintf(text, sizeof text, "airshade_memory: %s must be a whole byte offset from 0 to %zu", name, limit);
    napi_throw_range_error(env, NULL, text);
    return false;
  }
  *out = (size_t)d;
  return true;
}

static napi_value number(napi_env env, double d) {
  napi_value r;
  napi_create_double(env, d, &r);
  return r;
}

// madvise over the whole pages of the view's bytes [from, to): `from` rounded down to its page but never before the
// view's first whole page, `to` rounded down. The bytes advised, or NULL with an exception thrown.
static napi_value advise_pages(napi_env env, uint8_t *data, size_t from, size_t to, int advice, const char *what) {
#ifdef __linux__
  uintptr_t page = (uintptr_t)sysconf(_SC_PAGESIZE);
  uintptr_t first = ((uintptr_t)data + page - 1) & ~(page - 1);
  uintptr_t a = ((uintptr_t)data + from) & ~(page - 1);
  if (a < first) a = first;
  uintptr_t e = ((uintptr_t)data + to) & ~(page - 1);
  if (e <= a) return number(env, 0);
  if (madvise((void *)a, e - a, advice) != 0) {
    char text[128];
    snprintf(text, sizeof text, "airshade_memory: madvise(%s) failed: %s", what, strerror(errno));
    napi_throw_error(env, NULL, text);
    return NULL;
  }
  return number(env, (double)(e - a));
#else
  (void)data;
  (void)from;
  (void)to;
  (void)advice;
  (void)what;
  return number(env, 0);
#endif
}

#if !defined(__linux__) || !defined(MADV_HUGEPAGE)
#define NO_HUGE_PAGES 1
#endif

// The call's first `n` arguments (3 at most) into argv, the first one's bytes into data and length; false (an
// exception thrown, naming `usage`) when there are fewer or the first is not a typed array.
static bool view_args(napi_env env, napi_callback_info info, size_t n, napi_value *argv, const char *usage,
                      uint8_t **data, size_t *length) {
  size_t argc = n;
  napi_get_cb_info(env, info, &argc, argv, NULL, NULL);
  if (argc < n) {
    napi_throw_type_error(env, NULL, usage);
    return false;
  }
  return view_bytes(env, argv[0], data, length);
}

static napi_value huge_pages(napi_env env, napi_callback_info info) {
  napi_value argv[1];
  uint8_t *data;
  size_t length;
  if (!view_args(env, info, 1, argv, "airshade_memory: hugePages(view)", &data, &length)) return NULL;
#ifdef NO_HUGE_PAGES
  return number(env, 0);
#else
  return advise_pages(env, data, 0, length, MADV_HUGEPAGE, "MADV_HUGEPAGE");
#endif
}

#ifndef __linux__
#define MADV_DONTNEED 0 /* advise_pages does nothing here */
#endif

static napi_value release(napi_env env, napi_callback_info info) {
  napi_value argv[3];
  uint8_t *data;
  size_t length, from, to;
  if (!view_args(env, info, 3, argv, "airshade_memory: release(view, from, to)", &data, &length)) return NULL;
  if (!byte_arg(env, argv[2], length, "to", &to) || !byte_arg(env, argv[1], to, "from", &from)) return NULL;
  return advise_pages(env, data, from, to, MADV_DONTNEED, "MADV_DONTNEED");
}

NAPI_MODULE_INIT() {
  napi_value f;
  napi_create_function(env, "hugePages", NAPI_AUTO_LENGTH, huge_pages, NULL, &f);
  napi_set_named_property(env, exports, "hugePages", f);
  napi_create_function(env, "release", NAPI_AUTO_LENGTH, release, NULL, &f);
  napi_set_named_property(env, exports, "release", f);
  return exports;
}
