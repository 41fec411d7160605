% problem: Pelletier 56
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: with equality

fof(pel56_goal, conjecture,
    (! [X] : ((? [Y] : (p(Y) & X = f(Y))) => p(X))) <=> (! [X] : (p(X) => p(f(X))))).
