#pragma once
/// \file
/// \brief Umbrella header: everything keel offers.

#include "core/gaussian.hpp"
#include "core/innovation.hpp"
#include "core/status.hpp"
#include "discretize.hpp"
#include "ekf.hpp"
#include "gate.hpp"
#include "linear.hpp"
#include "manifold.hpp"
#include "manifold_filter.hpp"
#include "models/attitude.hpp"
#include "models/kinematic.hpp"
#include "models/planar.hpp"
#include "sigma.hpp"
#include "smooth.hpp"
#include "sqrt.hpp"
#include "ud.hpp"
#include "ukf.hpp"
