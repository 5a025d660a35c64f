// Every association in one place. Foreign keys and ON DELETE rules live in the
// migrations; these only give Sequelize the joins (`include`) and accessors.
import type { Models } from './models';

export function associate(m: Models): void {
	// People
	m.Account.belongsTo(m.User, { as: 'user', foreignKey: 'userId', onDelete: 'CASCADE' });
	m.User.hasMany(m.Account, { as: 'accounts', foreignKey: 'userId' });
	m.Session.belongsTo(m.User, { as: 'user', foreignKey: 'userId', onDelete: 'CASCADE' });
	m.User.hasMany(m.Session, { as: 'sessions', foreignKey: 'userId' });
	m.Invitation.belongsTo(m.User, { as: 'user', foreignKey: 'userId' });
	m.Invitation.belongsTo(m.User, { as: 'creator', foreignKey: 'createdBy' });
	m.User.hasMany(m.Invitation, { as: 'invitations', foreignKey: 'userId' });
	m.ApiToken.belongsTo(m.User, { as: 'user', foreignKey: 'userId' });
	m.User.hasMany(m.ApiToken, { as: 'apiTokens', foreignKey: 'userId' });

	// Facilities, campaigns, configurations
	m.MappingProfile.belongsTo(m.Facility, { as: 'facility', foreignKey: 'facilityId' });
	m.Facility.hasMany(m.MappingProfile, { as: 'mappingProfiles', foreignKey: 'facilityId' });
	m.Campaign.belongsTo(m.Facility, { as: 'facility', foreignKey: 'facilityId' });
	m.Facility.hasMany(m.Campaign, { as: 'campaigns', foreignKey: 'facilityId' });
	m.Campaign.belongsTo(m.User, { as: 'creator', foreignKey: 'createdBy' });
	m.Configuration.belongsTo(m.Campaign, { as: 'campaign', foreignKey: 'campaignId' });
	m.Campaign.hasMany(m.Configuration, { as: 'configurations', foreignKey: 'campaignId' });
	m.Configuration.belongsTo(m.Configuration, { as: 'parent', foreignKey: 'parentId' });
	m.Configuration.hasMany(m.Configuration, { as: 'children', foreignKey: 'parentId' });

	// Runs and measurements
	m.Run.belongsTo(m.Campaign, { as: 'campaign', foreignKey: 'campaignId' });
	m.Campaign.hasMany(m.Run, { as: 'runs', foreignKey: 'campaignId' });
	m.Run.belongsTo(m.Configuration, { as: 'configuration', foreignKey: 'configurationId' });
	m.Configuration.hasMany(m.Run, { as: 'runs', foreignKey: 'configurationId' });
	m.Run.belongsTo(m.Run, { as: 'tareRun', foreignKey: 'tareRunId' });
	m.Run.belongsTo(m.Run, { as: 'repeatOf', foreignKey: 'repeatOfRunId' });
	m.Run.hasMany(m.Run, { as: 'repeats', foreignKey: 'repeatOfRunId' });
	m.Run.belongsTo(m.User, { as: 'creator', foreignKey: 'createdBy' });
	m.SourceFile.belongsTo(m.Run, { as: 'run', foreignKey: 'runId' });
	m.Run.hasMany(m.SourceFile, { as: 'sourceFiles', foreignKey: 'runId' });
	m.Sample.belongsTo(m.Run, { as: 'run', foreignKey: 'runId' });
	m.Sample.belongsTo(m.SourceFile, { as: 'sourceFile', foreignKey: 'sourceFileId' });
	m.Reduction.belongsTo(m.Run, { as: 'run', foreignKey: 'runId' });
	m.Run.hasMany(m.Reduction, { as: 'reductions', foreignKey: 'runId' });
	m.Point.belongsTo(m.Reduction, { as: 'reduction', foreignKey: 'reductionId' });
	m.Reduction.hasMany(m.Point, { as: 'points', foreignKey: 'reductionId' });

	// Correlation
	m.Prediction.belongsTo(m.Run, { as: 'run', foreignKey: 'runId' });
	m.Run.hasMany(m.Prediction, { as: 'predictions', foreignKey: 'runId' });
	m.Prediction.belongsTo(m.Configuration, { as: 'configuration', foreignKey: 'configurationId' });
	m.Configuration.hasMany(m.Prediction, { as: 'predictions', foreignKey: 'configurationId' });
	m.Delta.belongsTo(m.Run, { as: 'run', foreignKey: 'runId' });
	m.Run.hasMany(m.Delta, { as: 'deltas', foreignKey: 'runId' });
	m.Delta.belongsTo(m.Prediction, { as: 'prediction', foreignKey: 'predictionId' });
	m.Delta.belongsTo(m.Reduction, { as: 'reduction', foreignKey: 'reductionId' });

	// Audit
	m.AuditEvent.belongsTo(m.User, { as: 'actor', foreignKey: 'actorUserId' });
}
