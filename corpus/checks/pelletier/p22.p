% problem: Pelletier 22
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: monadic

fof(pel22_goal, conjecture,
    (! [X] : (p <=> f(X))) => (p <=> ! [X] : f(X))).
