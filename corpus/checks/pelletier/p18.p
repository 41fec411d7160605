% problem: Pelletier 18
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: monadic

fof(pel18_goal, conjecture,
    ? [Y] : ! [X] : (f(Y) => f(X))).
