// Local module declaration for ml-regression 6.3.0, which ships no typings.
// Only the parts Spanline uses are declared.
declare module 'ml-regression' {
	interface MatrixLike {
		to2DArray(): number[][];
		get(row: number, column: number): number;
	}
	export class MultivariateLinearRegression {
		constructor(x: number[][], y: number[][], options?: { intercept?: boolean; statistics?: boolean });
		/** One row per input (then the intercept, when fitted), one column per output. */
		weights: number[][];
		stdError: number;
		stdErrors: number[];
		stdErrorMatrix: MatrixLike;
		tStats: number[];
		predict(x: number[]): number[];
	}
	export class PolynomialRegression {
		constructor(x: number[], y: number[], degree: number);
		coefficients: number[];
		predict(x: number): number;
	}
	export class TheilSenRegression {
		constructor(x: number[], y: number[]);
		slope: number;
		intercept: number;
		predict(x: number): number;
	}
	export class SimpleLinearRegression {
		constructor(x: number[], y: number[]);
		slope: number;
		intercept: number;
		predict(x: number): number;
	}
}
