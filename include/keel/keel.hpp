#pragma once
/// \file
/// \brief Umbrella header: everything keel offers.

#include "core/gaussian.hpp"
#include "core/innovation.hpp"
#include "core/status.hpp"
#include "gate.hpp"
#include "linear.hpp"
#include "sqrt.hpp"
#include "ud.hpp"
