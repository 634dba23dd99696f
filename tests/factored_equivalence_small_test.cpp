// Factored filters against the Joseph form over 100-step runs: 5 states, 2 measurements (factored_equivalence.hpp).
#include "factored_equivalence.hpp"

TEST_CASE_TEMPLATE("square-root and UD filters match the Joseph-form filter over 100 steps, 5x2", T, float, double) {
  keel_test::equivalence<T, 5, 2>(20);
}
