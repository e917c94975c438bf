//! Ranking: hard filters with reason codes, Pareto sorting with crowding distance, desirability
//! scores, diversity picking (issue 7).
