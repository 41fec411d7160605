% problem: Pelletier 40
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: full first-order

fof(pel40_goal, conjecture,
    (? [Y] : ! [X] : (f(X, Y) <=> f(X, X))) => ~ (! [X] : ? [Y] : ! [Z] : (f(Z, Y) <=> ~f(Z, X)))).
