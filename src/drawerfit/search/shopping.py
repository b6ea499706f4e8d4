def explain_infeasible(result, lines, trs, why, suggest=True):
    result.reason = "no design"
