/*
 * json_parts.h — private to the render stage: the parts of results.json
 * written by their own files (json_diagnostics.c), for json.c to place.
 */
#ifndef FITPROOF_RENDER_JSON_PARTS_H
#define FITPROOF_RENDER_JSON_PARTS_H

#include <jansson.h>

#include "../analysis/analysis.h"

/* A model's "diagnostics" object (new reference). */
json_t *render_json_diagnostics(const analysis_model *am);
/* The top-level "checks" array (new reference). */
json_t *render_json_checks(const analysis *a);

#endif
