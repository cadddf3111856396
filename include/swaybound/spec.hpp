#pragma once
// Umbrella header of the spec module: structs, loader and value paths.
#include "swaybound/spec/loader.hpp"
#include "swaybound/spec/paths.hpp"
#include "swaybound/spec/spec.hpp"
