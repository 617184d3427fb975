/* Compiled as C99: loads libtriaxcal_c with dlopen by its name (the loader searches
 * LD_LIBRARY_PATH), resolves every exported function with dlsym and calls each one, including with
 * NULL and malformed arguments. Exit 0 when every check holds; each failed check prints a line.
 * usage: plugin_c_dlopen LIBRARY_NAME EXAMPLES_DIR (examples/simulate, for a parameter set and protocol) */
#include <dlfcn.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "triaxcal_c.h"

static int failures = 0;

#define CHECK(cond)                                                     \
  do {                                                                  \
    if (!(cond)) {                                                      \
      fprintf(stderr, "c_abi_dlopen.c:%d: check failed: %s\n", __LINE__, #cond); \
      ++failures;                                                       \
    }                                                                   \
  } while (0)

static char* read_file(const char* dir, const char* name) {
  char path[4096];
  FILE* f;
  long n;
  char* text;
  snprintf(path, sizeof path, "%s/%s", dir, name);
  f = fopen(path, "rb");
  if (!f) {
    fprintf(stderr, "cannot open %s\n", path);
    exit(2);
  }
  fseek(f, 0, SEEK_END);
  n = ftell(f);
  fseek(f, 0, SEEK_SET);
  text = (char*)malloc((size_t)n + 1);
  if (!text || fread(text, 1, (size_t)n, f) != (size_t)n) exit(2);
  text[n] = '\0';
  fclose(f);
  return text;
}

/* dlsym returns void*; converting it to a function pointer goes through a union (ISO C has no
 * direct conversion). */
static void* symbol(void* lib, const char* name) {
  void* s = dlsym(lib, name);
  if (!s) {
    fprintf(stderr, "missing symbol %s: %s\n", name, dlerror());
    exit(2);
  }
  return s;
}
#define RESOLVE(type, var, name) \
  union { void* p; type f; } var##_u; type var; var##_u.p = symbol(lib, name); var = var##_u.f

typedef const char* (*version_fn)(void);
typedef int (*abi_fn)(void);
typedef const char* (*code_name_fn)(int);
typedef const char* (*last_error_fn)(void);
typedef const char* (*text_data_fn)(const triaxcal_text*);
typedef size_t (*text_size_fn)(const triaxcal_text*);
typedef void (*text_free_fn)(triaxcal_text*);
typedef int (*list_fn)(triaxcal_text**);
typedef int (*describe_fn)(const char*, triaxcal_text**);
typedef int (*validate_fn)(const char*, triaxcal_text**);
typedef int (*create_fn)(const char*, triaxcal_model**);
typedef void (*model_free_fn)(triaxcal_model*);
typedef int (*simulate_fn)(const triaxcal_model*, const char*, triaxcal_text**);
typedef int (*calibrate_fn)(const char*, const char*, triaxcal_progress_fn, void*, triaxcal_text**);
typedef const char* (*outcome_name_fn)(int);
typedef const char* (*outcome_explanation_fn)(int);
typedef int (*calibration_outcome_fn)(const char*, int*);

static int never_stop(const char* progress_json, void* user_data) {
  (void)progress_json;
  (void)user_data;
  return 0;
}

int main(int argc, char** argv) {
  void* lib;
  triaxcal_text* text = NULL;
  triaxcal_model* model = NULL;
  char* params;
  char* protocol;
  if (argc != 3) {
    fprintf(stderr, "usage: %s LIBRARY_NAME EXAMPLES_DIR\n", argv[0]);
    return 2;
  }
  if (strchr(argv[1], '/')) {
    fprintf(stderr, "give the library by name, not by path: %s\n", argv[1]);
    return 2;
  }
  lib = dlopen(argv[1], RTLD_NOW | RTLD_LOCAL);
  if (!lib) {
    fprintf(stderr, "dlopen(%s) failed: %s\n", argv[1], dlerror());
    return 2;
  }
  {
    RESOLVE(version_fn, version, "triaxcal_version");
    RESOLVE(abi_fn, abi, "triaxcal_abi_version");
    RESOLVE(code_name_fn, code_name, "triaxcal_code_name");
    RESOLVE(last_error_fn, last_error, "triaxcal_last_error");
    RESOLVE(text_data_fn, text_data, "triaxcal_text_data");
    RESOLVE(text_size_fn, text_size, "triaxcal_text_size");
    RESOLVE(text_free_fn, text_free, "triaxcal_text_free");
    RESOLVE(list_fn, list_models, "triaxcal_list_models");
    RESOLVE(describe_fn, describe_model, "triaxcal_describe_model");
    RESOLVE(validate_fn, validate, "triaxcal_validate_parameters");
    RESOLVE(create_fn, model_create, "triaxcal_model_create");
    RESOLVE(model_free_fn, model_free, "triaxcal_model_free");
    RESOLVE(simulate_fn, simulate, "triaxcal_simulate");
    RESOLVE(calibrate_fn, calibrate, "triaxcal_calibrate");
    RESOLVE(outcome_name_fn, outcome_name, "triaxcal_outcome_name");
    RESOLVE(outcome_explanation_fn, outcome_explanation, "triaxcal_outcome_explanation");
    RESOLVE(calibration_outcome_fn, calibration_outcome, "triaxcal_calibration_outcome");

    CHECK(version() != NULL && strlen(version()) >= 5);
    CHECK(abi() == TRIAXCAL_C_ABI_VERSION);
    CHECK(strcmp(code_name(TRIAXCAL_INVALID_INPUT), "invalid_input") == 0);
    CHECK(strcmp(code_name(12345), "unknown") == 0);

    CHECK(list_models(&text) == TRIAXCAL_OK);
    CHECK(strcmp(last_error(), "") == 0);
    CHECK(text_data(text) != NULL && strstr(text_data(text), "\"mohr_coulomb\"") != NULL);
    CHECK(text_size(text) == strlen(text_data(text)));
    text_free(text);
    text = NULL;
    CHECK(list_models(NULL) == TRIAXCAL_NULL_ARGUMENT);
    CHECK(strcmp(last_error(), "triaxcal_list_models: out is NULL") == 0);

    CHECK(describe_model("mohr_coulomb", &text) == TRIAXCAL_OK);
    CHECK(text != NULL && strstr(text_data(text), "\"friction_angle\"") != NULL);
    text_free(text);
    text = NULL;
    CHECK(describe_model("no_such_model", &text) == TRIAXCAL_INVALID_INPUT);
    CHECK(text == NULL);
    CHECK(strstr(last_error(), "unknown model 'no_such_model'") != NULL);
    CHECK(describe_model(NULL, &text) == TRIAXCAL_NULL_ARGUMENT);

    params = read_file(argv[2], "mohr_coulomb_sand.json");
    protocol = read_file(argv[2], "cd_100.json");
    CHECK(validate(params, &text) == TRIAXCAL_OK);
    CHECK(text != NULL && strstr(text_data(text), "\"youngs_modulus\"") != NULL);
    text_free(text);
    text = NULL;
    CHECK(validate("{\"format\": ", &text) == TRIAXCAL_INVALID_INPUT);
    CHECK(strstr(last_error(), "triaxcal_validate_parameters: parameter_set_json: line 1") != NULL);
    CHECK(validate(NULL, &text) == TRIAXCAL_NULL_ARGUMENT);

    CHECK(model_create(params, &model) == TRIAXCAL_OK);
    CHECK(model != NULL);
    CHECK(simulate(model, protocol, &text) == TRIAXCAL_OK);
    CHECK(text != NULL && strstr(text_data(text), "\"termination\":\"completed\"") != NULL);
    CHECK(text != NULL && strstr(text_data(text), "\"test\":\"CD-100\"") != NULL);
    text_free(text);
    text = NULL;
    CHECK(simulate(model, "[1, 2", &text) == TRIAXCAL_INVALID_INPUT);
    CHECK(strstr(last_error(), "triaxcal_simulate: protocol_json: line 1") != NULL);
    CHECK(text == NULL);
    CHECK(simulate(NULL, protocol, &text) == TRIAXCAL_NULL_ARGUMENT);
    CHECK(simulate(model, NULL, &text) == TRIAXCAL_NULL_ARGUMENT);
    CHECK(simulate(model, protocol, NULL) == TRIAXCAL_NULL_ARGUMENT);
    {
      triaxcal_model* other = NULL; /* *out is cleared, not freed: a second handle keeps `model` */
      CHECK(model_create(NULL, &other) == TRIAXCAL_NULL_ARGUMENT);
      CHECK(other == NULL);
    }
    model_free(model);
    model_free(NULL);
    text_free(NULL);
    CHECK(text_data(NULL) == NULL);
    CHECK(text_size(NULL) == 0);
    /* calibrate: its fits are tested in c_calibrate_test.cpp; here the C calling convention with a
     * C callback, NULL and malformed arguments. */
    CHECK(calibrate("{\"format\": ", "fit.json", never_stop, NULL, &text) == TRIAXCAL_INVALID_INPUT);
    CHECK(strstr(last_error(), "triaxcal_calibrate: fit.json: line 1") != NULL);
    CHECK(text == NULL);
    CHECK(calibrate(NULL, NULL, NULL, NULL, &text) == TRIAXCAL_NULL_ARGUMENT);
    CHECK(strcmp(last_error(), "triaxcal_calibrate: calibration_json is NULL") == 0);
    CHECK(calibrate("{}", NULL, NULL, NULL, NULL) == TRIAXCAL_NULL_ARGUMENT);
    /* outcomes: the enum's values and names, and reading one from a result text. */
    CHECK(strcmp(outcome_name(TRIAXCAL_OUTCOME_POOR_FIT), "poor_fit") == 0);
    CHECK(strcmp(outcome_name(99), "unknown") == 0);
    CHECK(strlen(outcome_explanation(TRIAXCAL_OUTCOME_FAILED)) > 0);
    {
      int outcome = -1;
      CHECK(calibration_outcome("{\"format\": \"triaxcal-calibration-result\", \"outcome\": \"stopped\"}", &outcome) ==
            TRIAXCAL_OK);
      CHECK(outcome == TRIAXCAL_OUTCOME_STOPPED);
      CHECK(calibration_outcome(NULL, &outcome) == TRIAXCAL_NULL_ARGUMENT);
    }
    free(params);
    free(protocol);
  }
  dlclose(lib);
  if (failures) {
    fprintf(stderr, "%d check(s) failed\n", failures);
    return 1;
  }
  printf("every C ABI entry point answered as documented\n");
  return 0;
}
