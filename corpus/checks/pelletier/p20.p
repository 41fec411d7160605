% problem: Pelletier 20
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: monadic

fof(pel20_goal, conjecture,
    (! [X, Y] : ? [Z] : ! [W] : ((p(X) & q(Y)) => (r(Z) & s(W)))) => ((? [X, Y] : (p(X) & q(Y))) => (? [Z] : r(Z)))).
