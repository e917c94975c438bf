//! Synthesis effort: coupling-reaction class of each inter-fragment bond, step count, effort
//! score and reagent cautions (issue 7).
