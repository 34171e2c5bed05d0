/*
 * age_chart.h - a small hand-made chart for the resolver tests: bounds as in
 * the ICS chart 2024-12 (Cohen et al., ICS chart v2024-12); the Cretaceous
 * series are named the rock way ("Lower Cretaceous"), the Jurassic ones the
 * time way ("Early Jurassic"), as different chart releases do.
 */
#ifndef AGE_CHART_H
#define AGE_CHART_H

#include "bathychron.h"

/** Builds the test chart; NULL on failure. Free with bc_chart_free. */
bc_chart *age_test_chart(void);

#endif
