import { Model, type Attributes, type InitOptions, type ModelAttributes, type ModelStatic, type Sequelize } from 'sequelize';

type ModelClass = ModelStatic<Model>;

/**
 * Bind a model class to one Sequelize instance. Each call initialises a fresh
 * subclass, so two instances (the app's and a test's scratch database) never
 * share or overwrite each other's model state; `instanceof` the base class
 * still holds. Table and column names are snake_case (`underscored: true`).
 */
export function bindModel<M extends ModelClass>(
	Base: M,
	attributes: ModelAttributes<InstanceType<M>, Attributes<InstanceType<M>>>,
	options: Omit<InitOptions<InstanceType<M>>, 'sequelize'> & { modelName: string; tableName: string },
	sequelize: Sequelize
): M {
	const Bound = class extends (Base as unknown as typeof Model) {} as unknown as M;
	(Bound as unknown as ModelStatic<Model>).init(attributes as ModelAttributes, {
		underscored: true,
		...(options as Omit<InitOptions, 'sequelize'>),
		sequelize
	});
	return Bound;
}
