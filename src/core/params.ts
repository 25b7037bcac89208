/** A matcher parameter value as written on the command line or in an experiment file. */
export type ParamValue = number | boolean | string;
