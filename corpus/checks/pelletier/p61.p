% problem: Pelletier 61
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: with equality

fof(assoc, axiom,
    ! [X, Y, Z] : f(X, f(Y, Z)) = f(f(X, Y), Z)).

fof(pel61_goal, conjecture,
    ! [X, Y, Z, W] : f(X, f(Y, f(Z, W))) = f(f(f(X, Y), Z), W)).
