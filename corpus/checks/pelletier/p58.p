% problem: Pelletier 58
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: with equality

fof(h1, axiom,
    ! [X, Y] : f(X) = g(Y)).

fof(pel58_goal, conjecture,
    ! [X, Y] : f(f(X)) = f(g(Y))).
