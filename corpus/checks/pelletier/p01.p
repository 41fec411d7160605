% problem: Pelletier 1, contraposition
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: propositional
% checked: propositional; sympy finds the premises with the negated conjecture unsatisfiable and the premises satisfiable

fof(pel1_goal, conjecture,
    (p => q) <=> (~q => ~p)).
