#pragma once
// Every closed-form family model of the catalogue, for programs that link the engine
// directly. The catalogue (heuristics/families/catalogue.h) builds them from a request.

#include "engine/model/families/decay_models.h"
#include "engine/model/families/dose_response_models.h"
#include "engine/model/families/growth_models.h"
#include "engine/model/families/oscillation_models.h"
#include "engine/model/families/peak_models.h"
#include "engine/model/families/polynomial_models.h"
