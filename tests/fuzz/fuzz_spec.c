/*
 * fuzz_spec.c — libFuzzer target for the spec parser (src/spec): any bytes
 * as a YAML spec. The parser must return a spec or record at least one
 * located error, and never crash, leak or read out of bounds. The data
 * file is never read (the spec names no existing file). Run with
 * `make fuzz`.
 */
#include <assert.h>
#include <stdint.h>

#include "../../src/spec/spec.h"

int LLVMFuzzerTestOneInput(const uint8_t *bytes, size_t size);

int LLVMFuzzerTestOneInput(const uint8_t *bytes, size_t size)
{
    error_list errors;
    error_list_init(&errors);
    spec *s = spec_parse("f/spec.yaml", (const char *)bytes, size, &errors);
    assert((s != NULL) == (errors.count == 0 && errors.suppressed == 0));
    spec_free(s);
    error_list_free(&errors);
    return 0;
}
