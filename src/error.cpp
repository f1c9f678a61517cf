#include "stipple/error.hpp"
// The error types are header-only; this unit keeps the library's first object file
// independent of any module.
