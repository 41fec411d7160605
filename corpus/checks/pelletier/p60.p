% problem: Pelletier 60
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: with equality

fof(pel60_goal, conjecture,
    ! [X] : (p(X, f(X)) <=> (? [Y] : ((! [Z] : (p(Z, Y) => p(Z, f(X)))) & p(X, Y))))).
